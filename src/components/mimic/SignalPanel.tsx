import type { LayoutDetector, LayoutLine, LayoutSignal } from "@shared/layout/schema";
import type { ShownAspect } from "@shared/rulebook/schema";

/** The parts of a layout the panel draws. `LayoutDetail` and a layout file both fit. */
export interface SignalPanelLayout {
  lines: LayoutLine[];
  detectors: LayoutDetector[];
  signals: LayoutSignal[];
}

export interface SignalPanelProps {
  layout: SignalPanelLayout;
  /** The aspect each signal shows; a signal missing here is drawn dark (unknown). */
  shown: Record<string, ShownAspect | undefined>;
  /** The detector that took the latest pulse, highlighted so the eye follows the train. */
  pulsedDetector?: string;
}

const LAMP: Record<ShownAspect, string> = {
  danger: "bg-aspect-danger text-aspect-danger shadow-lamp",
  caution: "bg-aspect-caution text-aspect-caution shadow-lamp",
  clear: "bg-aspect-clear text-aspect-clear shadow-lamp",
  dark: "bg-aspect-dark text-aspect-dark",
};
const WORD: Record<ShownAspect, string> = {
  danger: "text-aspect-danger",
  caution: "text-aspect-caution",
  clear: "text-aspect-clear",
  dark: "text-ink-faint",
};

type Item = { kind: "signal"; at: number; signal: LayoutSignal } | { kind: "detector"; at: number; detector: LayoutDetector };

function itemsOnLine(layout: SignalPanelLayout, lineId: string): Item[] {
  const items: Item[] = [
    ...layout.signals.filter((s) => s.line === lineId).map((signal): Item => ({ kind: "signal", at: signal.at, signal })),
    ...layout.detectors.filter((d) => d.line === lineId).map((detector): Item => ({ kind: "detector", at: detector.at, detector })),
  ];
  return items.sort((a, b) => a.at - b.at);
}

/** "Signal M1, Main home: clear" — the accessible name CONTRACT.md §7 promises. */
export function signalLabel(signal: Pick<LayoutSignal, "id" | "name">, aspect: ShownAspect): string {
  return `Signal ${signal.id}, ${signal.name}: ${aspect}`;
}

/**
 * Signals and detectors of each line in track order, with every signal's shown aspect.
 * A schematic stand-in for the drawn mimic: it has no controls, so the visitor display
 * can use it as it is.
 */
export function SignalPanel({ layout, shown, pulsedDetector }: SignalPanelProps) {
  return (
    <div className="space-y-4">
      {layout.lines.map((line) => {
        const items = itemsOnLine(layout, line.id);
        return (
          <section key={line.id} aria-label={`Line ${line.name}`} className="rounded-md border border-panel-700 bg-panel-950 p-3">
            <h3 className="mb-2 text-sm font-semibold text-ink-soft">{line.name}</h3>
            {items.length === 0 ? (
              <p className="text-sm text-ink-faint">No signals or detectors on this line.</p>
            ) : (
              <div className="relative">
                {/* The track: a rail behind the items, so position reads left to right. */}
                <div aria-hidden="true" className="absolute left-0 right-0 top-7 h-1 rounded bg-panel-600" />
                <ol className="relative flex flex-wrap items-start gap-3">
                  {items.map((item) =>
                    item.kind === "signal" ? (
                      <li key={`s-${item.signal.id}`}>
                        <SignalMark signal={item.signal} aspect={shown[item.signal.id] ?? "dark"} />
                      </li>
                    ) : (
                      <li key={`d-${item.detector.id}`}>
                        <DetectorMark detector={item.detector} pulsed={pulsedDetector === item.detector.id} />
                      </li>
                    ),
                  )}
                </ol>
              </div>
            )}
          </section>
        );
      })}
    </div>
  );
}

function SignalMark({ signal, aspect }: { signal: LayoutSignal; aspect: ShownAspect }) {
  return (
    <div
      role="img"
      aria-label={signalLabel(signal, aspect)}
      data-signal={signal.id}
      data-aspect={aspect}
      title={`${signal.name} at ${signal.at} m`}
      className="flex min-w-24 flex-col items-center gap-1 rounded-md border border-panel-600 bg-panel-850 px-3 py-2"
    >
      <span aria-hidden="true" className={`block h-7 w-7 rounded-full border-2 border-panel-950 ${LAMP[aspect]}`} />
      <span aria-hidden="true" className="text-lg font-bold leading-tight">
        {signal.id}
      </span>
      <span aria-hidden="true" className={`text-xs font-semibold uppercase tracking-wider ${WORD[aspect]}`}>
        {aspect}
      </span>
      <span aria-hidden="true" className="max-w-32 truncate text-xs text-ink-faint">
        {signal.name}
      </span>
    </div>
  );
}

function DetectorMark({ detector, pulsed }: { detector: LayoutDetector; pulsed: boolean }) {
  return (
    <div
      role="img"
      aria-label={`Detector ${detector.id}, ${detector.name}${pulsed ? ": pulsed" : ""}`}
      data-detector={detector.id}
      data-pulsed={pulsed ? "true" : undefined}
      title={`${detector.name} at ${detector.at} m`}
      className={`flex min-w-20 flex-col items-center gap-1 rounded-md border px-2 py-2 ${
        pulsed ? "border-brass bg-brass/20" : "border-panel-700 bg-panel-900"
      }`}
    >
      <span
        aria-hidden="true"
        className={`mt-1 block h-4 w-4 rotate-45 border-2 ${pulsed ? "border-brass bg-brass" : "border-ink-faint bg-panel-950"}`}
      />
      <span aria-hidden="true" className="text-sm font-bold">
        {detector.id}
      </span>
      <span aria-hidden="true" className="max-w-28 truncate text-xs text-ink-faint">
        {detector.name}
      </span>
    </div>
  );
}
