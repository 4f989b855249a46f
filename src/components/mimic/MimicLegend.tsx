/** What the mimic's marks mean, in words, for the clubroom and for visitors. */
export function MimicLegend({ className = "" }: { className?: string }) {
  return (
    <p className={`flex flex-wrap items-center gap-x-4 gap-y-1 ${className}`}>
      <span className="text-aspect-danger">● danger</span>
      <span className="text-aspect-caution">● caution</span>
      <span className="text-aspect-clear">● clear</span>
      <span className="text-ink-faint">○ dark (not known)</span>
      <span>
        <span aria-hidden="true" className="mr-1 inline-block h-0 w-6 border-t-2 border-dashed border-[#9fc3e6] align-middle" />
        route set
      </span>
      <span>
        <span aria-hidden="true" className="mr-1 inline-block h-1.5 w-6 rounded bg-brass align-middle" />
        train in section / waiting
      </span>
      <span>
        <span aria-hidden="true" className="mr-1 inline-block h-2.5 w-2.5 rounded-full bg-[#7fe3ff] align-middle" />
        detector pulse
      </span>
    </p>
  );
}
