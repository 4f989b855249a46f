import type { FieldErrors, FieldValues, Resolver } from "react-hook-form";
import type { z } from "zod";
import { toJsonPath } from "@shared/rulebook/validate";

/**
 * react-hook-form validation with one of the zod schemas the server also uses (shared/), so a
 * form and the API refuse the same input with the same words. Each problem lands on its field;
 * nested paths (`routes.0.signal`) are nested the way react-hook-form looks errors up.
 */
export function zodResolver<Input extends FieldValues, Output extends FieldValues = Input>(schema: z.ZodType<Output, Input>): Resolver<Input, unknown, Output> {
  return async (values) => {
    const result = await schema.safeParseAsync(values);
    if (result.success) return { values: result.data, errors: {} };
    const flat: Record<string, { type: string; message: string }> = {};
    for (const issue of result.error.issues) {
      const name = issue.path.map(String).join(".") || "root";
      flat[name] ??= { type: issue.code, message: issue.message };
    }
    return { values: {}, errors: nest(flat) as FieldErrors<Input> };
  };
}

/** `{"a.0.b": e}` → `{a: {0: {b: e}}}`. */
function nest(flat: Record<string, unknown>): Record<string, unknown> {
  const out: Record<string, unknown> = {};
  for (const [name, error] of Object.entries(flat)) {
    const parts = name.split(".");
    let at = out;
    for (const part of parts.slice(0, -1)) at = (at[part] ??= {}) as Record<string, unknown>;
    at[parts[parts.length - 1]] = error;
  }
  return out;
}

/** A zod issue path as the server writes it: `$.detectors[2].at`. */
export function issuePath(path: readonly PropertyKey[]): string {
  return toJsonPath(path);
}
