import { useId, type ReactElement, cloneElement } from "react";

export const INPUT =
  "w-full rounded-md border border-panel-600 bg-panel-950 px-2 py-1 text-sm text-ink focus:border-brass aria-[invalid=true]:border-aspect-danger";

interface FormFieldProps {
  label: string;
  /** Shown right under the control, tied to it for screen readers. */
  error?: string | string[];
  help?: string;
  children: ReactElement<Record<string, unknown>>;
  className?: string;
}

/** A labelled control with its error beside it (`aria-invalid`, `aria-describedby`). */
export function FormField({ label, error, help, children, className = "" }: FormFieldProps) {
  const id = useId();
  const errors = error === undefined ? [] : Array.isArray(error) ? error : [error];
  const describedBy = [errors.length > 0 ? `${id}-error` : null, help ? `${id}-help` : null].filter(Boolean).join(" ") || undefined;
  return (
    <div className={`flex flex-col gap-0.5 text-xs ${className}`}>
      <label htmlFor={id} className="font-semibold text-ink-soft">
        {label}
      </label>
      {cloneElement(children, { id, "aria-invalid": errors.length > 0 || undefined, "aria-describedby": describedBy })}
      {help ? (
        <span id={`${id}-help`} className="text-ink-faint">
          {help}
        </span>
      ) : null}
      {errors.length > 0 ? (
        <span id={`${id}-error`} className="text-notice-error">
          {errors.join("; ")}
        </span>
      ) : null}
    </div>
  );
}
