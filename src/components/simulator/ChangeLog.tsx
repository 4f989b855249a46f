import { useEffect, useRef, type ReactNode } from "react";
import { changeCause, describeChange, type SimEntry } from "../../lib/simulation";

interface ChangeLogProps {
  history: SimEntry[];
  cursor: number;
  onGoto: (index: number) => void;
  /** Show only this many steps either side of the cursor (a session replay has thousands). */
  around?: number;
  /** Extra words under a step, e.g. what a what-if run shows differently there. */
  note?: (index: number) => ReactNode;
}

/** Every input with each change it made and the rule (or command) that made it. */
export function ChangeLog({ history, cursor, onGoto, around, note }: ChangeLogProps) {
  const currentRef = useRef<HTMLLIElement>(null);
  useEffect(() => {
    currentRef.current?.scrollIntoView?.({ block: "nearest" });
  }, [cursor]);

  const from = around === undefined ? 0 : Math.max(0, cursor - around);
  const shown = around === undefined ? history : history.slice(from, cursor + around + 1);

  return (
    <ol className="max-h-[32rem] space-y-2 overflow-y-auto pr-1" aria-label="Change log" start={from + 1}>
      {shown.map((entry, offset) => {
        const index = from + offset;
        const isCurrent = index === cursor;
        const isFuture = index > cursor;
        return (
          <li
            key={index}
            ref={isCurrent ? currentRef : undefined}
            aria-current={isCurrent ? "step" : undefined}
            className={`rounded-md border p-2 text-sm ${isCurrent ? "border-brass bg-panel-800" : "border-panel-700 bg-panel-950"} ${isFuture ? "opacity-50" : ""}`}
          >
            <button type="button" onClick={() => onGoto(index)} className="w-full text-left font-semibold hover:text-brass">
              <span className="mr-2 text-ink-faint">{index}.</span>
              {entry.label}
            </button>
            <ViolationNote violates={entry.violates} />
            {note?.(index)}
            {entry.changes.length === 0 ? (
              <p className="mt-1 text-xs text-ink-faint">No change.</p>
            ) : (
              <ul className="mt-1 space-y-0.5">
                {entry.changes.map((change, i) => (
                  <li key={i} className="flex flex-wrap gap-x-2 text-xs">
                    <span className={change.kind === "alarm" || change.kind === "fault" ? "text-aspect-danger" : "text-ink"}>{describeChange(change)}</span>
                    <span className="text-brass">← {changeCause(change)}</span>
                  </li>
                ))}
              </ul>
            )}
          </li>
        );
      })}
    </ol>
  );
}

/**
 * What a counterexample step shows about the properties. A train waiting at danger is not a
 * break in itself (it happens in every sound run); the prover's "no-stuck-train" verdict is
 * that the wait can never end, which no single step can show, so it is worded as a fact.
 */
function ViolationNote({ violates }: { violates?: string[] }) {
  if (!violates || violates.length === 0) return null;
  const breaks = violates.filter((v) => v !== "no-stuck-train");
  const waiting = violates.includes("no-stuck-train");
  return (
    <>
      {breaks.length > 0 ? <p className="mt-1 text-xs font-bold text-aspect-danger">Breaks: {breaks.join(", ")}</p> : null}
      {waiting ? <p className="mt-1 text-xs text-aspect-caution">A train waits at a signal at danger.</p> : null}
    </>
  );
}
