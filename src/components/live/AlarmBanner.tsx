import { Link } from "react-router-dom";
import type { AlarmDto, LiveState } from "@shared/contract/live";
import { paths } from "../../lib/paths";

export const isOpen = (a: AlarmDto) => a.clearedAt === null;
export const needsAttention = (a: AlarmDto) => isOpen(a) && a.acknowledgedAt === null;

/**
 * The visual alarm cue (no sound): a wide striped banner with the count while any open alarm
 * is unacknowledged, a quieter line while acknowledged ones stay open, and a full-width
 * danger banner when the rulebook is faulted.
 */
export function AlarmBanner({ slug, state }: { slug: string; state: LiveState }) {
  const open = state.alarms.filter(isOpen);
  const attention = open.filter(needsAttention);
  return (
    <div className="space-y-2">
      {state.faulted ? (
        <div role="alert" className="rounded-lg border-2 border-aspect-danger bg-aspect-danger/20 p-4 text-lg font-bold text-ink">
          Rulebook stopped: every signal shows danger. <span className="font-normal text-ink-soft">{state.faulted.reason}</span>
        </div>
      ) : null}
      {attention.length > 0 ? (
        <div
          role="alert"
          data-alarm-banner="attention"
          className="flex flex-wrap items-center gap-x-4 gap-y-1 rounded-lg border-2 border-aspect-danger p-3 text-ink"
          style={{ backgroundImage: "repeating-linear-gradient(135deg, rgba(239,59,52,0.28) 0 14px, rgba(239,59,52,0.12) 14px 28px)" }}
        >
          <span className="rounded-md bg-aspect-danger px-3 py-1 text-2xl font-bold text-white" aria-label={`${attention.length} alarms need attention`}>
            {attention.length}
          </span>
          <span className="text-lg font-bold">{attention.length === 1 ? "Alarm needs attention" : "Alarms need attention"}</span>
          <span className="min-w-0 flex-1 truncate text-ink-soft">{attention[0].message}</span>
          <Link to={paths.alarms({ slug })} className="rounded-md border border-ink/50 bg-panel-950/70 px-3 py-1 font-semibold hover:bg-panel-900">
            Open alarms
          </Link>
        </div>
      ) : open.length > 0 ? (
        <p data-alarm-banner="acknowledged" className="rounded-md border border-aspect-caution/60 bg-aspect-caution/10 px-3 py-2 text-sm">
          {open.length} acknowledged {open.length === 1 ? "alarm is" : "alarms are"} still open.{" "}
          <Link to={paths.alarms({ slug })} className="font-semibold underline">
            See alarms
          </Link>
        </p>
      ) : null}
    </div>
  );
}
