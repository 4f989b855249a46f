import { Link } from "react-router-dom";
import { ALARM_KIND, type AlarmKind } from "@shared/contract/alarmKinds";
import type { AlarmDto } from "@shared/contract/live";
import { formatDateTimeSeconds as formatDateTime } from "../../lib/format";
import { Panel } from "../ui/Panel";
import { AcknowledgeForm } from "./AcknowledgeForm";
import { paths } from "../../lib/paths";

export const ALARM_KIND_WORDS: Record<AlarmKind, string> = {
  [ALARM_KIND.stuck]: "Stuck latch or counter",
  [ALARM_KIND.nodeOffline]: "Node offline",
  [ALARM_KIND.detectorSilent]: "Detector silent",
  [ALARM_KIND.chatter]: "Detector chatter",
  [ALARM_KIND.axleMismatch]: "Axle-count mismatch",
  [ALARM_KIND.missedPulses]: "Missed pulses",
  [ALARM_KIND.lampProving]: "Lamp proving",
  [ALARM_KIND.pointsDetection]: "Points not detected where thrown",
  [ALARM_KIND.ruleLoop]: "Rule loop",
  [ALARM_KIND.countUnderflow]: "Count underflow",
  [ALARM_KIND.rulebook]: "Rulebook alarm",
};

const Time = ({ iso }: { iso: string }) => <time dateTime={iso}>{formatDateTime(iso)}</time>;

/**
 * One alarm. Repeats of an open alarm (same kind and subject) are counted on it rather than
 * listed again, so the card says how often it happened and when it was last seen: a detector
 * that chattered forty times reads differently from one that chattered once.
 */
export function AlarmCard({ slug, alarm: a, canAcknowledge }: { slug: string; alarm: AlarmDto; canAcknowledge: boolean }) {
  const attention = !a.acknowledgedAt && !a.clearedAt;
  return (
    <Panel
      title={`${ALARM_KIND_WORDS[a.kind] ?? a.kind}${a.subject ? ` — ${a.subject}` : ""}`}
      className={attention ? "border-2 border-aspect-danger" : ""}
      actions={
        <span className={`rounded px-2 py-0.5 text-xs font-semibold ${a.clearedAt ? "bg-panel-700 text-ink-soft" : attention ? "bg-aspect-danger text-white" : "bg-aspect-caution text-panel-950"}`}>
          {a.clearedAt ? "cleared" : a.acknowledgedAt ? "acknowledged" : "needs attention"}
        </span>
      }
    >
      <p className="text-ink">{a.message}</p>
      <p className="mt-1 text-sm font-semibold text-ink-soft" data-occurrences={a.occurrences}>
        {a.occurrences === 1 ? "Happened once" : `Happened ${a.occurrences.toLocaleString("en-GB")} times`} · last seen <Time iso={a.lastSeenAt} />
      </p>
      <p className="mt-1 text-sm text-ink-faint">
        Raised <Time iso={a.raisedAt} />
        {a.clearedAt ? (
          <>
            {" "}
            · cleared <Time iso={a.clearedAt} />
          </>
        ) : null}
        {a.acknowledgedAt ? (
          <>
            {" "}
            · acknowledged <Time iso={a.acknowledgedAt} /> by {a.acknowledgedBy ?? "someone"}
          </>
        ) : null}
      </p>
      {a.comment ? <p className="mt-1 text-sm text-ink-soft">“{a.comment}”</p> : null}
      <p className="mt-1 flex flex-wrap gap-3 text-sm">
        {a.sessionId && a.eventId ? (
          <Link className="text-brass hover:underline" to={paths.sessions({ slug }, { query: { session: a.sessionId, event: a.eventId } })}>
            Event #{a.eventId} in the log
          </Link>
        ) : null}
        {a.sessionId ? (
          <Link className="text-brass hover:underline" to={paths.sessions({ slug }, { query: { session: a.sessionId } })}>
            Session #{a.sessionId}
          </Link>
        ) : null}
        <Link className="text-brass hover:underline" to={paths.live({ slug }, { hash: a.subject ?? undefined })}>
          On the mimic
        </Link>
      </p>
      {!a.acknowledgedAt && canAcknowledge ? (
        <div className="mt-3">
          <AcknowledgeForm alarm={a} />
        </div>
      ) : null}
    </Panel>
  );
}
