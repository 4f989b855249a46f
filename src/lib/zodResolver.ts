import type { FieldErrors, FieldValues, Resolver } from "react-hook-form";
import type { z } from "zod";
import { toJsonPath } from "../../shared/rulebook/validate";

/**
 * react-hook-form ⇄ a zod schema from shared/: the form is checked by the very schema the
 * server uses, and each problem lands on its field (nested paths as `a.0.b`).
 */
export function zodResolver<T extends FieldValues>(schema: z.ZodType<T, FieldValues>): Resolver<T> {
  return async (values) => {
    const result = schema.safeParse(values);
    if (result.success) return { values: result.data, errors: {} };
    const errors: Record<string, unknown> = {};
    for (const issue of result.error.issues) {
      const name = issue.path.map(String).join(".") || "root";
      if (!(name in errors)) errors[name] = { type: issue.code, message: issue.message };
    }
    return { values: {}, errors: nest(errors) as FieldErrors<T> };
  };
}

/** `{"a.0.b": e}` → `{a: {0: {b: e}}}`, the shape react-hook-form looks errors up in. */
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
