import type { FieldValues, Path, UseFormRegister } from "react-hook-form";
import { FormField, INPUT } from "../records/FormField";

export interface RoleOption {
  id: string;
  name: string;
  at: number;
}

const describe = (o: RoleOption) => `${o.id} — ${o.name} (${o.at.toFixed(1)} m)`;

interface SelectRoleProps<T extends FieldValues> {
  label: string;
  name: Path<T>;
  options: RoleOption[];
  register: UseFormRegister<T>;
  error?: string;
  onPicked?: (value: string) => void;
}

/** One detector or signal for a role: only those of the right line are offered. */
export function SelectRole<T extends FieldValues>({ label, name, options, register, error, onPicked }: SelectRoleProps<T>) {
  return (
    <FormField label={label} error={error}>
      <select className={INPUT} {...register(name, { onChange: (e: { target: { value: string } }) => onPicked?.(e.target.value) })}>
        <option value="">(choose)</option>
        {options.map((o) => (
          <option key={o.id} value={o.id}>
            {describe(o)}
          </option>
        ))}
      </select>
    </FormField>
  );
}

interface PickRolesProps<T extends FieldValues> {
  label: string;
  name: Path<T>;
  options: RoleOption[];
  register: UseFormRegister<T>;
  error?: string;
}

/** Several detectors for a role, offered in their order along the line (a train meets them so). */
export function PickRoles<T extends FieldValues>({ label, name, options, register, error }: PickRolesProps<T>) {
  return (
    <fieldset className="text-xs" aria-invalid={error ? true : undefined}>
      <legend className="font-semibold text-ink-soft">{label}</legend>
      <div className="mt-1 flex flex-wrap gap-x-3 gap-y-1">
        {options.map((o) => (
          <label key={o.id} className="flex items-center gap-1 text-sm">
            <input type="checkbox" value={o.id} {...register(name)} />
            {o.id} <span className="text-ink-faint">({o.at.toFixed(1)} m)</span>
          </label>
        ))}
        {options.length === 0 ? <span className="text-ink-faint">no detectors on this line</span> : null}
      </div>
      {error ? <span className="text-notice-error">{error}</span> : null}
    </fieldset>
  );
}
