import type { ReactNode } from "react";
import type { LiveState } from "../../../shared/contract/live";
import type { LayoutSignal } from "../../../shared/layout/schema";
import { formatDuration } from "../../lib/duration";
import { Button } from "../ui/Button";
import type { CommandDraft } from "./CommandDialog";

/** A latch or counter left set longer than this is drawn in caution colours. */
export const LONG_SET_MS = 5 * 60_000;

interface StatePanelProps {
  state: LiveState;
  signals: LayoutSignal[];
  now: number;
  /** Present for signallers and admins: offers the commands. */
  onCommand?: (command: CommandDraft) => void;
}

const ASPECT_TEXT: Record<string, string> = {
  danger: "text-aspect-danger",
  caution: "text-aspect-caution",
  clear: "text-aspect-clear",
  dark: "text-ink-faint",
};

function Row({ name, value, since, now, long, action, attr }: { name: string; value: ReactNode; since?: string; now: number; long?: boolean; action?: ReactNode; attr: Record<string, string> }) {
  const age = since ? now - Date.parse(since) : NaN;
  const stale = Boolean(long && age > LONG_SET_MS);
  return (
    <tr {...attr} className="border-t border-panel-700">
      <th scope="row" className="py-1.5 pr-3 text-left font-semibold">
        {name}
      </th>
      <td className="py-1.5 pr-3">{value}</td>
      <td className={`py-1.5 pr-3 text-xs ${stale ? "font-semibold text-aspect-caution" : "text-ink-faint"}`}>{since ? `for ${formatDuration(age)}` : ""}</td>
      <td className="py-1.5 text-right">{action}</td>
    </tr>
  );
}

function Group({ title, children, empty }: { title: string; children: ReactNode[]; empty: string }) {
  return (
    <div>
      <h3 className="mt-3 text-xs font-semibold uppercase tracking-wider text-ink-faint">{title}</h3>
      {children.length === 0 ? (
        <p className="py-1 text-sm text-ink-faint">{empty}</p>
      ) : (
        <table className="w-full text-sm">
          <tbody>{children}</tbody>
        </table>
      )}
    </div>
  );
}

/** Signals, latches, counters, selectors and armed quiet triggers, each with how long it has been so. */
export function StatePanel({ state, signals, now, onCommand }: StatePanelProps) {
  const held = new Set(state.held);
  const act = (label: string, command: CommandDraft, tone: "plain" | "danger" = "plain") =>
    onCommand ? (
      <Button tone={tone} className="px-2 py-0.5 text-xs" onClick={() => onCommand(command)}>
        {label}
      </Button>
    ) : null;

  return (
    <div>
      <Group title="Signals" empty="No signals.">
        {signals.map((s) => {
          const aspect = state.shown[s.id] ?? "dark";
          const isHeld = held.has(s.id);
          return (
            <Row
              key={s.id}
              attr={{ "data-state-signal": s.id }}
              name={`${s.id} ${s.name}`}
              value={
                <span className={`font-semibold uppercase ${ASPECT_TEXT[aspect]}`}>
                  {aspect}
                  {isHeld ? <span className="ml-2 rounded bg-ink px-1.5 text-xs text-panel-950">held</span> : null}
                </span>
              }
              since={state.since[`signal:${s.id}`]}
              now={now}
              action={isHeld ? act(`Release ${s.id}`, { type: "release", signal: s.id }) : act(`Hold ${s.id}`, { type: "hold", signal: s.id }, "danger")}
            />
          );
        })}
      </Group>
      <Group title="Latches" empty="This rulebook has no latches.">
        {Object.entries(state.latches).map(([name, on]) => (
          <Row
            key={name}
            attr={{ "data-state-latch": name }}
            name={name}
            value={<span className={on ? "font-semibold text-brass" : "text-ink-soft"}>{on ? "set" : "clear"}</span>}
            since={state.since[`latch:${name}`]}
            now={now}
            long={on}
            action={on ? act(`Clear ${name}`, { type: "clear", latch: name }) : act(`Set ${name}`, { type: "set", latch: name })}
          />
        ))}
      </Group>
      <Group title="Counters" empty="This rulebook has no counters.">
        {Object.entries(state.counters).map(([name, n]) => (
          <Row
            key={name}
            attr={{ "data-state-counter": name }}
            name={name}
            value={<span className={n > 0 ? "font-semibold text-brass" : "text-ink-soft"}>{n}</span>}
            since={state.since[`counter:${name}`]}
            now={now}
            long={n > 0}
            action={n > 0 ? act(`Zero ${name}`, { type: "zero", counter: name }) : null}
          />
        ))}
      </Group>
      <Group title="Selectors" empty="This rulebook has no selectors.">
        {Object.entries(state.selectors).map(([name, value]) => (
          <Row key={name} attr={{ "data-state-selector": name }} name={name} value={<span className="font-semibold">{value}</span>} since={state.since[`selector:${name}`]} now={now} />
        ))}
      </Group>
      <Group title="Armed quiet triggers" empty="None armed.">
        {Object.entries(state.quiet).map(([rule, deadline]) => (
          <Row key={rule} attr={{ "data-state-quiet": rule }} name={rule} value={<span className="text-ink-soft">fires in {formatDuration(Date.parse(deadline) - now)}</span>} now={now} />
        ))}
      </Group>
    </div>
  );
}
