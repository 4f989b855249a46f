import type { ReactNode } from "react";

interface PanelProps {
  title: string;
  children: ReactNode;
  /** Controls shown at the right of the title bar. */
  actions?: ReactNode;
  className?: string;
}

/** A titled section of a page. */
export function Panel({ title, children, actions, className = "" }: PanelProps) {
  return (
    <section className={`rounded-lg border border-panel-700 bg-panel-900 p-4 ${className}`} aria-label={title}>
      <div className="mb-3 flex flex-wrap items-center justify-between gap-2">
        <h2 className="text-base font-bold text-ink">{title}</h2>
        {actions ? <div className="flex flex-wrap gap-2">{actions}</div> : null}
      </div>
      {children}
    </section>
  );
}
