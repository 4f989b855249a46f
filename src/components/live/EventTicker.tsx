import { memo } from "react";
import type { ChangeDto } from "@shared/contract/live";
import type { TickerEntry } from "../../api/live";
import { formatTime } from "../../lib/duration";

/** A value as the state table words it: latches "set"/"clear", aspects in capitals. */
function word(kind: ChangeDto["kind"], value: unknown): string {
  if (kind === "latch" || kind === "held") return value === true ? "set" : value === false ? "clear" : String(value);
  if (value === null || value === undefined) return "—";
  if (typeof value === "object") return JSON.stringify(value);
  return kind === "wanted" || kind === "shown" ? String(value).toUpperCase() : String(value);
}

function describeChange(c: ChangeDto): string {
  const by = c.rule ? ` (rule ${c.rule})` : c.command ? ` (${c.command}${c.detail ? `: ${c.detail}` : ""})` : "";
  if (c.kind === "alarm") return `alarm: ${c.detail ?? word(c.kind, c.to)}${by}`;
  if (c.kind === "held") return `signal ${c.name}: ${c.to === true ? "held" : "released"}${by}`;
  return `${c.kind === "wanted" ? "signal" : c.kind} ${c.name}: ${word(c.kind, c.from)} → ${word(c.kind, c.to)}${by}`;
}

type Tone = "ok" | "duplicate" | "rejected";

function describeEvent(entry: TickerEntry): { kind: string; text: string; tone: Tone } {
  const e = entry.event;
  if (!e) return { kind: "change", text: "state changed", tone: "ok" };
  const tone: Tone = e.status === "accepted" ? "ok" : e.status === "duplicate" ? "duplicate" : "rejected";
  const why = e.status === "accepted" ? "" : ` — ${e.status.toUpperCase()}${e.reason ? `: ${e.reason}` : ""}`;
  if (e.kind === "pulse") return { kind: "pulse", text: `pulse at ${e.detector ?? "?"}${e.node ? ` from ${e.node}` : ""}${why}`, tone };
  if (e.kind === "status") return { kind: "node", text: `board ${e.node ?? "?"} status${why}`, tone };
  if (e.kind === "command") return { kind: "command", text: `signaller command${why}`, tone };
  if (e.kind === "shown") return { kind: "proving", text: `lamp report from ${e.node ?? "?"}${why}`, tone };
  if (e.kind === "tick") return { kind: "tick", text: `clock tick${why}`, tone };
  return { kind: e.kind, text: `${e.kind} on ${e.node ?? "an unknown topic"}${why}`, tone };
}

const TONE_STYLE: Record<Tone, string> = {
  ok: "border-panel-700 bg-panel-950",
  duplicate: "border-aspect-caution/60 bg-aspect-caution/10",
  rejected: "border-aspect-danger/70 bg-aspect-danger/10",
};

const KIND_STYLE: Record<string, string> = {
  pulse: "text-[#7fe3ff]",
  command: "text-brass",
  node: "text-ink-soft",
  proving: "text-ink-soft",
  change: "text-ink-soft",
  tick: "text-ink-faint",
};

const TickerRow = memo(function TickerRow({ entry }: { entry: TickerEntry }) {
  const { kind, text, tone } = describeEvent(entry);
  return (
    <li data-event-status={entry.event?.status ?? "change"} className={`rounded border px-2 py-1 ${TONE_STYLE[tone]}`}>
      <div className="flex gap-2">
        <span className="text-ink-faint">{entry.event ? formatTime(entry.event.receivedAt) : ""}</span>
        <span className={`font-semibold ${tone === "rejected" ? "text-notice-error" : tone === "duplicate" ? "text-aspect-caution" : (KIND_STYLE[kind] ?? "text-ink")}`}>{text}</span>
      </div>
      {entry.changes.length > 0 ? (
        <ul className="ml-4 text-xs text-ink-soft">
          {entry.changes
            .filter((c) => c.kind !== "quiet")
            .map((c, i) => (
              <li key={i}>{describeChange(c)}</li>
            ))}
        </ul>
      ) : null}
    </li>
  );
});

/** The newest events first, each with the changes it caused and the rule that made them. */
export const EventTicker = memo(function EventTicker({ entries: all }: { entries: TickerEntry[] }) {
  // A push with no event and nothing changed (e.g. a node list refresh) is not news.
  const entries = all.filter((e) => e.event !== null || e.changes.some((c) => c.kind !== "quiet"));
  if (entries.length === 0) return <p className="text-sm text-ink-faint">Waiting for the first event of this session…</p>;
  return (
    <ol aria-label="Live events, newest first" className="max-h-96 space-y-1 overflow-y-auto pr-1 font-mono text-sm [contain:strict] h-96">
      {entries.map((entry) => (
        <TickerRow key={entry.event ? `e${entry.event.id}` : `v${entry.version}`} entry={entry} />
      ))}
    </ol>
  );
});
