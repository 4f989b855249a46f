import { useId, useState } from "react";
import type { AlarmDto } from "@shared/contract/live";
import { useAcknowledgeAlarm } from "../../api/alarms";
import { Button } from "../ui/Button";

/** Acknowledge one alarm with a comment ("checked BE, beam was blocked by a leaf"). */
export function AcknowledgeForm({ alarm }: { alarm: AlarmDto }) {
  const [comment, setComment] = useState("");
  const ack = useAcknowledgeAlarm();
  const id = useId();
  return (
    <form
      className="flex flex-wrap items-end gap-2"
      onSubmit={(e) => {
        e.preventDefault();
        ack.mutate({ id: alarm.id, comment: comment.trim() });
      }}
    >
      <div className="min-w-48 flex-1">
        <label htmlFor={id} className="block text-xs text-ink-faint">
          Comment for alarm {alarm.id}
        </label>
        <input id={id} value={comment} onChange={(e) => setComment(e.target.value)} maxLength={500} className="w-full rounded-md border border-panel-600 bg-panel-950 px-2 py-1 text-sm" />
      </div>
      <Button type="submit" tone="primary" disabled={ack.isPending}>
        {ack.isPending ? "Acknowledging…" : "Acknowledge"}
      </Button>
      {ack.isError ? (
        <p role="alert" className="w-full text-sm text-notice-error">
          {ack.error.message}
        </p>
      ) : null}
    </form>
  );
}
