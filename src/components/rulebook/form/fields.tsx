import { useState, type ReactNode } from "react";
import type { ValidationError } from "@shared/rulebook/validate";

/** Errors whose path is `path` itself or anything inside it. */
export function errorsUnder(errors: readonly ValidationError[], path: string): ValidationError[] {
  return errors.filter((e) => e.path === path || e.path.startsWith(`${path}.`) || e.path.startsWith(`${path}[`));
}

/** Problems shown right beside the control they belong to, with their JSON path. */
export function FieldErrors({ errors }: { errors: readonly ValidationError[] }) {
  if (errors.length === 0) return null;
  return (
    <ul className="space-y-0.5 text-xs text-notice-error" data-testid="field-errors">
      {errors.map((error, index) => (
        <li key={`${error.path}:${index}`}>
          <code className="text-brass">{error.path}</code> {error.message}
        </li>
      ))}
    </ul>
  );
}

const CONTROL =
  "rounded-md border border-panel-600 bg-panel-950 px-2 py-1 text-sm text-ink focus:border-brass aria-[invalid=true]:border-aspect-danger";

function Labelled({ label, children, className = "" }: { label: string; children: ReactNode; className?: string }) {
  return (
    <label className={`flex flex-col gap-0.5 text-xs font-semibold text-ink-soft ${className}`}>
      {label}
      {children}
    </label>
  );
}

export interface Option {
  value: string;
  label?: string;
}

/** Plain options from names, plus the current value when it is not one of them (so it shows, marked). */
export function namesWith(current: string, names: readonly string[], missing = "not declared"): Option[] {
  const options: Option[] = names.map((name) => ({ value: name }));
  if (!names.includes(current)) options.unshift({ value: current, label: current ? `${current} (${missing})` : "(choose)" });
  return options;
}

interface SelectFieldProps {
  label: string;
  value: string;
  options: readonly Option[];
  onChange: (value: string) => void;
  invalid?: boolean;
  className?: string;
}

export function SelectField({ label, value, options, onChange, invalid, className }: SelectFieldProps) {
  return (
    <Labelled label={label} className={className}>
      <select value={value} onChange={(event) => onChange(event.target.value)} aria-invalid={invalid || undefined} className={CONTROL}>
        {options.map((option) => (
          <option key={option.value} value={option.value}>
            {option.label ?? option.value}
          </option>
        ))}
      </select>
    </Labelled>
  );
}

interface TextFieldProps {
  label: string;
  value: string;
  onChange: (value: string) => void;
  invalid?: boolean;
  maxLength?: number;
  className?: string;
}

export function TextField({ label, value, onChange, invalid, maxLength, className }: TextFieldProps) {
  return (
    <Labelled label={label} className={className}>
      <input value={value} maxLength={maxLength} onChange={(event) => onChange(event.target.value)} aria-invalid={invalid || undefined} className={CONTROL} />
    </Labelled>
  );
}

interface NumberFieldProps {
  label: string;
  value: number;
  onChange: (value: number) => void;
  min?: number;
  invalid?: boolean;
  className?: string;
}

/**
 * A whole number. What is typed stays as typed ("-" on the way to "-1"); the draft only
 * changes when the text is a whole number.
 */
export function NumberField({ label, value, onChange, min, invalid, className }: NumberFieldProps) {
  const [text, setText] = useState(String(value));
  const [shown, setShown] = useState(value);
  if (shown !== value) {
    // The draft changed from elsewhere (the JSON tab, a move): show the new value.
    setShown(value);
    setText(String(value));
  }
  return (
    <Labelled label={label} className={className}>
      <input
        inputMode="numeric"
        value={text}
        min={min}
        aria-invalid={invalid || undefined}
        onChange={(event) => {
          setText(event.target.value);
          const trimmed = event.target.value.trim();
          if (/^-?\d+$/.test(trimmed)) {
            const next = Number(trimmed);
            setShown(next);
            onChange(next);
          }
        }}
        className={`${CONTROL} w-24`}
      />
    </Labelled>
  );
}

interface CommitTextFieldProps {
  label: string;
  value: string;
  /** Returns a reason when the text cannot be taken, else null after taking it. */
  onCommit: (value: string) => string | null;
  className?: string;
}

/**
 * Text taken only on Enter or leaving the field: used for names that are keys of the file,
 * where every keystroke would otherwise rename (and could merge) entries.
 */
export function CommitTextField({ label, value, onCommit, className }: CommitTextFieldProps) {
  const [text, setText] = useState(value);
  const [base, setBase] = useState(value);
  const [problem, setProblem] = useState<string | null>(null);
  if (base !== value) {
    setBase(value);
    setText(value);
    setProblem(null);
  }
  const commit = () => {
    if (text === value) return setProblem(null);
    setProblem(onCommit(text.trim()));
  };
  return (
    <Labelled label={label} className={className}>
      <input
        value={text}
        onChange={(event) => setText(event.target.value)}
        onBlur={commit}
        onKeyDown={(event) => {
          if (event.key === "Enter") {
            event.preventDefault();
            commit();
          } else if (event.key === "Escape") {
            setText(value);
            setProblem(null);
          }
        }}
        aria-invalid={problem ? true : undefined}
        className={CONTROL}
      />
      {problem ? <span className="font-normal text-notice-error">{problem}</span> : null}
    </Labelled>
  );
}
