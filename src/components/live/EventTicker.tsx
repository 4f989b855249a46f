import { memo } from "react";
import type { ChangeDto } from "../../../shared/contract/live";
import type { TickerEntry } from "../../api/live";
import { formatTime } from "../../lib/duration";

function describeChange(c: ChangeDto): string {
  const to = typeof c.to === "object" ? JSON.stringify(c.to) : String(c.to);
  const from = typeof c.from === "object" ? JSON.stringify(c.from) : String(c.from);
  const by = c.rule ? ` (rule ${c.rule})` : c.command ? ` (${c.command}${c.detail ? `: ${c.detail}` : ""})` : "";
  if (c.kind === "alarm") return `alarm: ${c.detail ?? to}${by}`;
  return `${c.kind} ${c.name}: ${from} → ${to}${by}`;
}

function describeEvent(entry: TickerEntry): { kind: string; text: string } {
  const e = entry.event;
  if (!e) return { kind: "change", text: entry.changes.length ? "state changed" : "state update" };
  if (e.kind === "pulse") {
    const status = e.status === "accepted" ? "" : ` — ${e.status}${e.reason ? `: ${e.reason}` : ""}`;
    return { kind: "pulse", text: `pulse at ${e.detector ?? "?"}${e.node ? ` from ${e.node}` : ""}${status}` };
  }
  if (e.kind === "status") return { kind: "node", text: `node ${e.node ?? "?"} status` };
  if (e.kind === "command") return { kind: "command", text: "signaller command" };
  if (e.kind === "shown") return { kind: "proving", text: `lamp proving from ${e.node ?? "?"}` };
  return { kind: e.kind, text: e.kind };
}

const KIND_STYLE: Record<string, string> = {
  pulse: "text-[#7fe3ff]",
  command: "text-brass",
  node: "text-ink-soft",
  proving: "text-ink-soft",
  change: "text-ink-soft",
  tick: "text-ink-faint",
};

const TickerRow = memo(function TickerRow({ entry }: { entry: TickerEntry }) {
  const { kind, text } = describeEvent(entry);
  return (
    <li className="rounded border border-panel-700 bg-panel-950 px-2 py-1">
      <div className="flex gap-2">
        <span className="text-ink-faint">{entry.event ? formatTime(entry.event.receivedAt) : ""}</span>
        <span className={`font-semibold ${KIND_STYLE[kind] ?? "text-ink"}`}>{text}</span>
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
export const EventTicker = memo(function EventTicker({ entries }: { entries: TickerEntry[] }) {
  if (entries.length === 0) return <p className="text-sm text-ink-faint">Waiting for the first event of this session…</p>;
  return (
    <ol aria-label="Live events, newest first" className="max-h-96 space-y-1 overflow-y-auto pr-1 font-mono text-sm [contain:strict] h-96">
      {entries.map((entry) => (
        <TickerRow key={entry.version} entry={entry} />
      ))}
    </ol>
  );
});
