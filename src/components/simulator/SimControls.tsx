import { useId, useState } from "react";
import type { EngineInput, EngineState } from "@shared/rulebook/engine";
import { POINTS_LIES } from "@shared/rulebook/schema";
import type { SignalPanelLayout } from "../mimic/SignalPanel";
import { Button } from "../ui/Button";

/** Reason recorded on simulated signaller commands, as the live log would show one. */
const SIM_REASON = "simulator";

interface SimControlsProps {
  layout: SignalPanelLayout & { points?: { id: string; name: string }[] };
  state: EngineState;
  onInput: (input: EngineInput) => void;
}

function msField(value: string): number | null {
  const n = Number(value);
  return Number.isFinite(n) && n >= 0 ? Math.round(n) : null;
}

/** Pulses, clock advances and signaller commands, each applied at the simulated clock. */
export function SimControls({ layout, state, onInput }: SimControlsProps) {
  const gapId = useId();
  const tickId = useId();
  const [gap, setGap] = useState("250");
  const [advance, setAdvance] = useState("1000");
  const gapMs = msField(gap);
  const advanceMs = msField(advance);

  return (
    <div className="space-y-4">
      <fieldset className="space-y-2">
        <legend className="text-sm font-semibold text-ink-soft">Pulse a detector</legend>
        <div className="flex flex-wrap gap-2">
          {layout.detectors.map((detector) => (
            <Button
              key={detector.id}
              onClick={() => onInput({ type: "pulse", detector: detector.id, at: state.clock + (gapMs ?? 0) })}
              disabled={gapMs === null}
              title={`${detector.name} (${detector.at} m on ${detector.line})`}
            >
              Pulse {detector.id}
            </Button>
          ))}
        </div>
        <div className="flex items-center gap-2 text-sm">
          <label htmlFor={gapId} className="text-ink-soft">
            Each pulse comes this many ms after the last input
          </label>
          <input
            id={gapId}
            inputMode="numeric"
            value={gap}
            onChange={(e) => setGap(e.target.value)}
            className="w-24 rounded-md border border-panel-600 bg-panel-950 px-2 py-1 text-ink"
          />
        </div>
      </fieldset>

      {layout.points?.length ? (
        <fieldset className="space-y-2">
          <legend className="text-sm font-semibold text-ink-soft">Report where points lie</legend>
          {layout.points.map((points) => (
            <div key={points.id} className="flex flex-wrap items-center gap-2 text-sm">
              <span className="w-40 text-ink-soft">
                {points.id} ({state.points?.[points.id] ?? "not reported"})
              </span>
              {POINTS_LIES.map((lies) => (
                <Button key={lies} onClick={() => onInput({ type: "points", points: points.id, lies, at: state.clock + (gapMs ?? 0) })} disabled={gapMs === null}>
                  {points.id} {lies}
                </Button>
              ))}
            </div>
          ))}
        </fieldset>
      ) : null}

      <fieldset className="flex flex-wrap items-center gap-2 text-sm">
        <legend className="mb-2 text-sm font-semibold text-ink-soft">Clock</legend>
        <label htmlFor={tickId} className="text-ink-soft">
          Advance clock by
        </label>
        <input
          id={tickId}
          inputMode="numeric"
          value={advance}
          onChange={(e) => setAdvance(e.target.value)}
          className="w-24 rounded-md border border-panel-600 bg-panel-950 px-2 py-1 text-ink"
        />
        <span className="text-ink-soft">ms</span>
        <Button onClick={() => advanceMs !== null && onInput({ type: "tick", at: state.clock + advanceMs })} disabled={advanceMs === null}>
          Advance
        </Button>
      </fieldset>

      <fieldset className="space-y-2">
        <legend className="text-sm font-semibold text-ink-soft">Signaller</legend>
        <div className="flex flex-wrap gap-2">
          {layout.signals.map((signal) => {
            const held = state.held.includes(signal.id);
            return (
              <Button
                key={signal.id}
                aria-pressed={held}
                onClick={() =>
                  onInput({ type: "command", command: held ? "release" : "hold", signal: signal.id, at: state.clock, reason: SIM_REASON })
                }
              >
                {held ? `Release ${signal.id}` : `Hold ${signal.id}`}
              </Button>
            );
          })}
          <Button tone="danger" onClick={() => onInput({ type: "command", command: "restart", at: state.clock, reason: SIM_REASON })}>
            Restart rulebook
          </Button>
        </div>
      </fieldset>
    </div>
  );
}
