import { useMemo } from "react";
import { useForm, type DefaultValues, type FieldValues, type Path, type Resolver } from "react-hook-form";
import { z } from "zod";
import type { ValidationError } from "@shared/rulebook/validate";
import { zodResolver } from "../../lib/zodResolver";
import { Button } from "../ui/Button";
import { FormField, INPUT } from "./FormField";

export interface FieldSpec<T> {
  name: keyof T & string;
  label: string;
  type: "text" | "number" | "select" | "checks";
  /** For select and checks: the values offered (only those that fit, e.g. this layout's lines). */
  options?: { value: string; label?: string }[];
  help?: string;
  step?: string;
}

interface RowFormProps<T extends FieldValues> {
  /** Names the form for screen readers, e.g. "Detector MA" or "New detector". */
  title: string;
  fields: FieldSpec<T>[];
  schema: z.ZodType<T, FieldValues>;
  initial: T;
  /** Ids already used by other rows of the same table. */
  takenIds: readonly string[];
  /** Problems the server (or the whole-draft check) found in this row, by field name. */
  outside: Record<string, string[]>;
  onSubmit: (row: T) => void;
  onCancel: () => void;
}

/** One record's inline form, checked by the shared zod schema plus "id not used twice". */
export function RowForm<T extends FieldValues>({ title, fields, schema, initial, takenIds, outside, onSubmit, onCancel }: RowFormProps<T>) {
  const checked = useMemo(
    () =>
      schema.superRefine((row, ctx) => {
        const id = (row as { id?: unknown }).id;
        if (typeof id === "string" && takenIds.includes(id)) ctx.addIssue({ code: "custom", path: ["id"], message: `${id} is used already` });
      }) as z.ZodType<T, FieldValues>,
    [schema, takenIds],
  );
  // The row schemas take any field values and give the record type: one type for both sides here.
  const { register, handleSubmit, formState } = useForm<T>({ resolver: zodResolver(checked) as unknown as Resolver<T>, defaultValues: initial as DefaultValues<T> });
  const errorOf = (name: string): string[] => {
    const own = (formState.errors as Record<string, { message?: string } | undefined>)[name]?.message;
    return [...(own ? [own] : []), ...(formState.isSubmitted ? [] : (outside[name] ?? []))];
  };
  return (
    <form
      aria-label={title}
      className="grid gap-3 rounded-md border border-brass/50 bg-panel-850 p-3 sm:grid-cols-3"
      onSubmit={(e) => {
        e.stopPropagation();
        void handleSubmit((row) => onSubmit(row))(e);
      }}
    >
      {fields.map((f) =>
        f.type === "checks" ? (
          <fieldset key={f.name} className="sm:col-span-3 text-xs" aria-invalid={errorOf(f.name).length > 0 || undefined}>
            <legend className="font-semibold text-ink-soft">{f.label}</legend>
            <div className="mt-1 flex flex-wrap gap-3">
              {(f.options ?? []).map((o) => (
                <label key={o.value} className="flex items-center gap-1 text-sm">
                  <input type="checkbox" value={o.value} {...register(f.name as Path<T>)} />
                  {o.label ?? o.value}
                </label>
              ))}
              {(f.options ?? []).length === 0 ? <span className="text-ink-faint">none on this layout yet</span> : null}
            </div>
            {errorOf(f.name).length > 0 ? <span className="text-notice-error">{errorOf(f.name).join("; ")}</span> : null}
          </fieldset>
        ) : (
          <FormField key={f.name} label={f.label} error={errorOf(f.name)} help={f.help}>
            {f.type === "select" ? (
              <select className={INPUT} {...register(f.name as Path<T>)}>
                {(f.options ?? []).map((o) => (
                  <option key={o.value} value={o.value}>
                    {o.label ?? o.value}
                  </option>
                ))}
              </select>
            ) : (
              <input
                className={INPUT}
                type={f.type === "number" ? "number" : "text"}
                step={f.step ?? (f.type === "number" ? "any" : undefined)}
                {...register(f.name as Path<T>, f.type === "number" ? { valueAsNumber: true } : {})}
              />
            )}
          </FormField>
        ),
      )}
      <div className="flex items-end gap-2 sm:col-span-3">
        <Button type="submit" tone="primary">
          Keep
        </Button>
        <Button onClick={onCancel}>Cancel</Button>
      </div>
    </form>
  );
}

/** Errors under `$.kind[index]`, grouped by the field they name (`""` for the row itself). */
export function rowErrors(errors: readonly ValidationError[], kind: string, index: number): Record<string, string[]> {
  const prefix = `$.${kind}[${index}]`;
  const out: Record<string, string[]> = {};
  for (const e of errors) {
    if (e.path !== prefix && !e.path.startsWith(`${prefix}.`) && !e.path.startsWith(`${prefix}[`)) continue;
    const field = e.path.slice(prefix.length).replace(/^\./, "").split(/[.[]/)[0];
    (out[field] ??= []).push(e.message);
  }
  return out;
}
