import type { ReactNode } from "react";
import type { EngineState } from "@shared/rulebook/engine";
import { formatClock } from "../../lib/format";

function Row({ label, children }: { label: string; children: ReactNode }) {
  return (
    <>
      <dt className="font-semibold text-ink-soft">{label}</dt>
      <dd className="break-words">{children}</dd>
    </>
  );
}

const none = <span className="text-ink-faint">none</span>;

/** The rulebook's memory at the current point: latches, counters, selectors, armed quiet triggers. */
export function StateView({ state }: { state: EngineState }) {
  const latches = Object.entries(state.latches);
  const counters = Object.entries(state.counters);
  const selectors = Object.entries(state.selectors);
  const quiet = Object.entries(state.quiet).sort((a, b) => a[1] - b[1]);
  return (
    <dl className="grid grid-cols-[max-content_1fr] gap-x-4 gap-y-2 text-sm">
      <Row label="Clock">{formatClock(state.clock)}</Row>
      {state.faulted ? (
        <Row label="Fault">
          <span className="font-bold text-aspect-danger">
            {state.faulted.reason} (at {formatClock(state.faulted.at)}) — every signal at danger
          </span>
        </Row>
      ) : null}
      <Row label="Latches">
        {latches.length
          ? latches.map(([name, on]) => (
              <span key={name} className={`mr-3 inline-block ${on ? "font-bold text-brass" : "text-ink-soft"}`}>
                {name}: {on ? "set" : "clear"}
              </span>
            ))
          : none}
      </Row>
      <Row label="Counters">
        {counters.length
          ? counters.map(([name, n]) => (
              <span key={name} className={`mr-3 inline-block ${n > 0 ? "font-bold text-brass" : "text-ink-soft"}`}>
                {name}: {n}
              </span>
            ))
          : none}
      </Row>
      <Row label="Selectors">
        {selectors.length
          ? selectors.map(([name, value]) => (
              <span key={name} className="mr-3 inline-block">
                {name}: <strong>{value}</strong>
              </span>
            ))
          : none}
      </Row>
      <Row label="Held">{state.held.length ? state.held.join(", ") : none}</Row>
      <Row label="Quiet triggers armed">
        {quiet.length
          ? quiet.map(([rule, deadline]) => (
              <span key={rule} className="mr-3 inline-block">
                {rule} fires at {formatClock(deadline)}
                {deadline > state.clock ? ` (in ${formatClock(deadline - state.clock)})` : " (due)"}
              </span>
            ))
          : none}
      </Row>
    </dl>
  );
}
