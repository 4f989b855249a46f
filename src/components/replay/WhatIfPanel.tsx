import { useId } from "react";
import type { RunComparison } from "../../lib/replay";
import { Button } from "../ui/Button";

export interface WhatIfOption {
  value: string;
  label: string;
}

interface WhatIfPanelProps {
  options: WhatIfOption[];
  chosen: string;
  onChoose: (value: string) => void;
  /** Null while no what-if rulebook is chosen or it cannot run. */
  comparison: RunComparison | null;
  cursor: number;
  goto: (index: number) => void;
  steps: number;
}

/** Choose another rulebook for the same inputs; see where, and how often, the signals would differ. */
export function WhatIfPanel({ options, chosen, onChoose, comparison, cursor, goto, steps }: WhatIfPanelProps) {
  const id = useId();
  const here = comparison?.differences.get(cursor) ?? [];
  const marked = comparison ? [...comparison.differences.keys()] : [];
  const next = marked.find((i) => i > cursor);
  const previous = [...marked].reverse().find((i) => i < cursor);

  return (
    <div className="space-y-3 text-sm">
      <div className="flex flex-wrap items-center gap-2">
        <label htmlFor={id} className="font-semibold text-ink-soft">
          Replay the same inputs against
        </label>
        <select id={id} value={chosen} onChange={(e) => onChoose(e.target.value)} className="rounded-md border border-panel-600 bg-panel-950 px-2 py-1.5 text-ink">
          <option value="">— no what-if —</option>
          {options.map((o) => (
            <option key={o.value} value={o.value}>
              {o.label}
            </option>
          ))}
        </select>
      </div>
      {comparison ? (
        <>
          <p role="status" className={comparison.count === 0 ? "text-notice-ok" : "text-aspect-caution"}>
            {comparison.first === null
              ? `The signals would have shown the same at all ${steps} steps.`
              : `The signals would differ at ${comparison.count} of ${steps} steps; first at step ${comparison.first}.`}
          </p>
          {comparison.first !== null ? (
            <div className="flex flex-wrap gap-2">
              <Button onClick={() => goto(comparison.first!)}>First difference</Button>
              <Button onClick={() => previous !== undefined && goto(previous)} disabled={previous === undefined}>
                Previous difference
              </Button>
              <Button onClick={() => next !== undefined && goto(next)} disabled={next === undefined}>
                Next difference
              </Button>
            </div>
          ) : null}
          {here.length === 0 ? (
            <p className="text-ink-faint">At step {cursor} both runs show the same aspects.</p>
          ) : (
            <table className="w-full text-left">
              <caption className="mb-1 text-left font-semibold text-aspect-caution">Differs at step {cursor}</caption>
              <thead className="text-xs uppercase text-ink-soft">
                <tr>
                  <th scope="col">Signal</th>
                  <th scope="col">Recorded</th>
                  <th scope="col">What-if</th>
                </tr>
              </thead>
              <tbody>
                {here.map((d) => (
                  <tr key={d.signal} className="border-t border-panel-700">
                    <td>{d.signal}</td>
                    <td>{d.recorded}</td>
                    <td>{d.whatIf}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          )}
        </>
      ) : null}
    </div>
  );
}
