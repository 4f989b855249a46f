import { memo, type ReactNode } from "react";
import type { LiveState } from "@shared/contract/live";
import type { NodeDto } from "@shared/contract/rest";
import type { LayoutSignal } from "@shared/layout/schema";
import { signalBoards } from "../../lib/liveStatus";
import { formatDuration } from "../../lib/duration";
import { Button } from "../ui/Button";
import type { CommandDraft } from "./CommandDialog";

/** A latch or counter left set longer than this is drawn in caution colours. */
export const LONG_SET_MS = 5 * 60_000;

interface StatePanelProps {
  state: LiveState;
  signals: LayoutSignal[];
  /** The boards, to say what each signal's board shows (lamp proving) beside what was asked. */
  nodes?: NodeDto[];
  now: number;
  /** Present for signallers and admins: offers the commands. Keep it stable (useCallback). */
  onCommand?: (command: CommandDraft) => void;
}

const ASPECT_TEXT: Record<string, string> = {
  danger: "text-aspect-danger",
  caution: "text-aspect-caution",
  clear: "text-aspect-clear",
  dark: "text-ink-faint",
};

/** The commands a row of the state table offers (restart is the page's own button). */
type Act = Exclude<CommandDraft["type"], "restart">;

function draftFor(act: Act, target: string): CommandDraft {
  if (act === "hold" || act === "release") return { type: act, signal: target };
  if (act === "zero") return { type: act, counter: target };
  return { type: act, latch: target };
}

interface RowProps {
  kind: string;
  target: string;
  label: string;
  value: string;
  valueClass: string;
  badge?: string;
  /** A second fact beside the value (for a signal: what its board shows). */
  detail?: string;
  detailClass?: string;
  since?: string;
  now: number;
  long?: boolean;
  act?: Act;
  onCommand?: (command: CommandDraft) => void;
}

// Memoised with plain props: under a stream of pushes only the rows that changed re-render.
const Row = memo(function Row({ kind, target, label, value, valueClass, badge, detail, detailClass, since, now, long, act, onCommand }: RowProps) {
  const age = since ? now - Date.parse(since) : NaN;
  const stale = Boolean(long && age > LONG_SET_MS);
  const action = act && onCommand;
  return (
    <tr {...{ [`data-state-${kind}`]: target }} className="border-t border-panel-700">
      <th scope="row" className="w-[38%] truncate py-1.5 pr-3 text-left font-semibold">
        {label}
      </th>
      <td className="py-1.5 pr-3">
        <span className={valueClass}>{value}</span>
        {badge ? <span className="ml-2 rounded bg-ink px-1.5 text-xs text-panel-950">{badge}</span> : null}
        {detail ? <span className={`block text-xs ${detailClass ?? "text-ink-faint"}`}>{detail}</span> : null}
      </td>
      <td className={`w-[20%] whitespace-nowrap py-1.5 pr-3 text-xs ${stale ? "font-semibold text-aspect-caution" : "text-ink-faint"}`}>{since ? `for ${formatDuration(age)}` : ""}</td>
      <td className="w-[26%] py-1.5 text-right">
        {action ? (
          <Button tone={act === "hold" ? "danger" : "plain"} className="px-2 py-0.5 text-xs" onClick={() => onCommand(draftFor(act, target))}>
            {`${act[0].toUpperCase()}${act.slice(1)} ${target}`}
          </Button>
        ) : null}
      </td>
    </tr>
  );
});

function Group({ title, children, empty }: { title: string; children: ReactNode[]; empty: string }) {
  return (
    <div>
      <h3 className="mt-3 text-xs font-semibold uppercase tracking-wider text-ink-faint">{title}</h3>
      {children.length === 0 ? (
        <p className="py-1 text-sm text-ink-faint">{empty}</p>
      ) : (
        <table className="w-full table-fixed text-sm">
          <tbody>{children}</tbody>
        </table>
      )}
    </div>
  );
}

/** Signals, latches, counters, selectors and armed quiet triggers, each with how long it has been so. */
/** What the signal's board says it shows, in words, and whether that disagrees with what was asked. */
function boardSays(state: LiveState, board: NodeDto | undefined, signal: string, asked: string): { text: string; warn: boolean } | undefined {
  if (!board) return undefined;
  if (!state.nodes[board.id]?.online) return { text: `${board.name} offline: lamp unknown`, warn: true };
  const lamp = state.lamps?.[signal];
  if (!lamp) return { text: `${board.name}: no lamp report yet`, warn: false };
  return { text: `board shows ${lamp.aspect.toUpperCase()}`, warn: lamp.aspect !== asked };
}

export function StatePanel({ state, signals, nodes = [], now, onCommand }: StatePanelProps) {
  const held = new Set(state.held);
  const boards = signalBoards(nodes);
  return (
    <div>
      <Group title="Signals" empty="No signals.">
        {signals.map((s) => {
          const aspect = state.shown[s.id] ?? "dark";
          const isHeld = held.has(s.id);
          const lamp = boardSays(state, boards[s.id], s.id, aspect);
          return (
            <Row
              key={s.id}
              kind="signal"
              target={s.id}
              label={`${s.id} ${s.name}`}
              value={`${aspect.toUpperCase()} asked`}
              valueClass={`font-semibold ${ASPECT_TEXT[aspect]}`}
              badge={isHeld ? "held" : undefined}
              detail={lamp?.text}
              detailClass={lamp?.warn ? "font-semibold text-aspect-caution" : undefined}
              since={state.since[`signal:${s.id}`]}
              now={now}
              act={isHeld ? "release" : "hold"}
              onCommand={onCommand}
            />
          );
        })}
      </Group>
      <Group title="Latches" empty="This rulebook has no latches.">
        {Object.entries(state.latches).map(([name, on]) => (
          <Row
            key={name}
            kind="latch"
            target={name}
            label={name}
            value={on ? "set" : "clear"}
            valueClass={on ? "font-semibold text-brass" : "text-ink-soft"}
            since={state.since[`latch:${name}`]}
            now={now}
            long={on}
            act={on ? "clear" : "set"}
            onCommand={onCommand}
          />
        ))}
      </Group>
      <Group title="Counters" empty="This rulebook has no counters.">
        {Object.entries(state.counters).map(([name, n]) => (
          <Row
            key={name}
            kind="counter"
            target={name}
            label={name}
            value={String(n)}
            valueClass={n > 0 ? "font-semibold text-brass" : "text-ink-soft"}
            since={state.since[`counter:${name}`]}
            now={now}
            long={n > 0}
            act={n > 0 ? "zero" : undefined}
            onCommand={onCommand}
          />
        ))}
      </Group>
      <Group title="Selectors" empty="This rulebook has no selectors.">
        {Object.entries(state.selectors).map(([name, value]) => (
          <Row key={name} kind="selector" target={name} label={name} value={value} valueClass="font-semibold" since={state.since[`selector:${name}`]} now={now} />
        ))}
      </Group>
      <Group title="Armed quiet triggers" empty="None armed.">
        {Object.entries(state.quiet).map(([rule, deadline]) => (
          <Row key={rule} kind="quiet" target={rule} label={rule} value={`fires in ${formatDuration(Date.parse(deadline) - now)}`} valueClass="text-ink-soft" now={now} />
        ))}
      </Group>
    </div>
  );
}
