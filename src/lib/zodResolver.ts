import type { FieldErrors, FieldValues, Resolver } from "react-hook-form";
import type { z } from "zod";

/**
 * react-hook-form validation with one of the zod schemas the server also uses
 * (shared/contract/), so a form and the API refuse the same input with the same words.
 * Errors are keyed by the first path segment: the forms here are flat.
 */
export function zodResolver<Input extends FieldValues, Output extends FieldValues>(schema: z.ZodType<Output, Input>): Resolver<Input, unknown, Output> {
  return async (values) => {
    const result = await schema.safeParseAsync(values);
    if (result.success) return { values: result.data, errors: {} };
    const errors: Record<string, { type: string; message: string }> = {};
    for (const issue of result.error.issues) {
      const key = String(issue.path[0] ?? "root");
      errors[key] ??= { type: issue.code, message: issue.message };
    }
    return { values: {}, errors: errors as FieldErrors<Input> };
  };
}
