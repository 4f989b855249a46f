import { useId, type InputHTMLAttributes } from "react";
import type { UseFormRegisterReturn } from "react-hook-form";

interface TextFieldProps extends Omit<InputHTMLAttributes<HTMLInputElement>, "id"> {
  label: string;
  registration: UseFormRegisterReturn;
  error?: string;
  /** Shown under the label from the start (a password rule), not only after a mistake. */
  hint?: string;
}

export const fieldClass =
  "w-full rounded-md border border-panel-600 bg-panel-950 px-3 py-2 text-base text-ink placeholder:text-ink-faint focus:border-brass";

/** A labelled input with its rule and its error tied to it for screen readers. */
export function TextField({ label, registration, error, hint, ...input }: TextFieldProps) {
  const id = useId();
  const described = [hint ? `${id}-hint` : null, error ? `${id}-error` : null].filter(Boolean).join(" ");
  return (
    <div className="space-y-1">
      <label htmlFor={id} className="block text-sm font-semibold text-ink-soft">
        {label}
      </label>
      {hint ? (
        <p id={`${id}-hint`} className="text-xs text-ink-faint">
          {hint}
        </p>
      ) : null}
      <input id={id} className={fieldClass} aria-invalid={error ? true : undefined} aria-describedby={described || undefined} {...input} {...registration} />
      {error ? (
        <p id={`${id}-error`} className="text-sm text-notice-error">
          {error}
        </p>
      ) : null}
    </div>
  );
}
