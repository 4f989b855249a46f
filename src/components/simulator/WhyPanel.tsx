import type { LayoutSignal } from "@shared/layout/schema";
import type { ShownAspect } from "@shared/rulebook/schema";
import { explainSignal, type SimEntry } from "../../lib/simulation";

interface WhyPanelProps {
  signals: LayoutSignal[];
  shown: Record<string, ShownAspect | undefined>;
  history: SimEntry[];
  cursor: number;
}

/** "Why is M1 at danger?" answered for every signal at the current step. */
export function WhyPanel({ signals, shown, history, cursor }: WhyPanelProps) {
  return (
    <ul className="space-y-1 text-sm">
      {signals.map((signal) => (
        <li key={signal.id}>
          <strong>{signal.id}</strong> <span className="text-ink-faint">({shown[signal.id] ?? "dark"})</span>:{" "}
          {explainSignal(history, cursor, signal.id)}
        </li>
      ))}
    </ul>
  );
}
