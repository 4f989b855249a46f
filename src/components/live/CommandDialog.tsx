import { useId, useState } from "react";
import type { CommandBody } from "@shared/contract/live";
import { ConfirmDialog } from "../ui/ConfirmDialog";

/** A command before its reason is given: the body without `reason`, one variant per command. */
export type CommandDraft = CommandBody extends infer Body ? (Body extends CommandBody ? Omit<Body, "reason"> : never) : never;

export const MIN_REASON_LENGTH = 3;

export function describeCommand(c: CommandDraft): { title: string; confirm: string; explain: string } {
  switch (c.type) {
    case "hold":
      return { title: `Hold signal ${c.signal} at danger`, confirm: `Hold ${c.signal}`, explain: `${c.signal} will show danger whatever the rulebook asks until it is released.` };
    case "release":
      return { title: `Release signal ${c.signal}`, confirm: `Release ${c.signal}`, explain: `${c.signal} will show what the rulebook asks for again. Make sure the line is clear.` };
    case "set":
      return { title: `Set latch ${c.latch}`, confirm: `Set ${c.latch}`, explain: "The rulebook will act as if its own rules had set it." };
    case "clear":
      return { title: `Clear latch ${c.latch}`, confirm: `Clear ${c.latch}`, explain: "Only clear a latch once you have seen with your own eyes that nothing it protects is there." };
    case "zero":
      return { title: `Zero counter ${c.counter}`, confirm: `Zero ${c.counter}`, explain: "Only zero a counter once you have checked that the section it counts is empty." };
    case "restart":
      return { title: "Restart the rulebook", confirm: "Restart", explain: "Every latch, counter and selector goes back to its starting value and holds are lifted. Check the whole junction is empty first." };
  }
}

interface CommandDialogProps {
  command: CommandDraft;
  busy: boolean;
  error?: string | null;
  onSend: (body: CommandBody) => void;
  onCancel: () => void;
}

/** Confirmation with a required reason: every command is audited with who, when and why. */
export function CommandDialog({ command, busy, error, onSend, onCancel }: CommandDialogProps) {
  const [reason, setReason] = useState("");
  const [tried, setTried] = useState(false);
  const id = useId();
  const text = describeCommand(command);
  const tooShort = reason.trim().length < MIN_REASON_LENGTH;
  const confirm = () => {
    setTried(true);
    if (tooShort) return;
    onSend({ ...command, reason: reason.trim() } as CommandBody);
  };
  return (
    <ConfirmDialog title={text.title} confirmLabel={text.confirm} onConfirm={confirm} onCancel={onCancel} busy={busy}>
      <p>{text.explain}</p>
      <div className="space-y-1">
        <label htmlFor={id} className="block font-semibold text-ink">
          Reason (recorded in the audit log)
        </label>
        <textarea
          id={id}
          value={reason}
          onChange={(e) => setReason(e.target.value)}
          rows={3}
          maxLength={500}
          aria-invalid={tried && tooShort}
          aria-describedby={`${id}-hint`}
          className="w-full rounded-md border border-panel-600 bg-panel-950 p-2 text-ink"
        />
        <p id={`${id}-hint`} className={tried && tooShort ? "text-notice-error" : "text-ink-faint"}>
          {tried && tooShort ? `Give a reason of at least ${MIN_REASON_LENGTH} characters.` : "For example: shunt into the quarry siding."}
        </p>
      </div>
      {error ? (
        <p role="alert" className="text-notice-error">
          {error}
        </p>
      ) : null}
    </ConfirmDialog>
  );
}
