import type { FieldValues, Path, UseFormSetError } from "react-hook-form";
import { ApiError } from "../api/http";

/**
 * Puts the server's `[{path:"$.email", message}]` details beside the matching fields.
 * Returns the message to show above the form when no field took it.
 */
export function applyServerErrors<T extends FieldValues>(error: unknown, setError: UseFormSetError<T>, fields: readonly Path<T>[]): string | null {
  if (!(error instanceof ApiError)) return error ? "Something went wrong. Try again." : null;
  let placed = false;
  for (const detail of error.fieldErrors) {
    const name = detail.path.replace(/^\$\./, "").split(/[.[]/)[0] as Path<T>;
    if (fields.includes(name)) {
      setError(name, { type: "server", message: detail.message });
      placed = true;
    }
  }
  return placed ? null : error.message;
}
