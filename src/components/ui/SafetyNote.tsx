/**
 * The operating-aid caution, repeated wherever the product could be mistaken for
 * protection (prover, publishing, live control, footer).
 */
export const SAFETY_TEXT =
  "Blocklight is an operating aid, not a certified interlocking. Keep independent protection for passenger-carrying lines and follow your society's operating rules and local codes.";

export function SafetyNote({ className = "" }: { className?: string }) {
  return (
    <p className={`rounded-md border border-aspect-caution/50 bg-aspect-caution/10 p-3 text-sm text-ink-soft ${className}`}>
      <strong className="text-aspect-caution">Operating aid only.</strong> {SAFETY_TEXT}
    </p>
  );
}
