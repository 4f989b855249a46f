/**
 * Reads the body of `PUT /api/layouts/:slug` into the records to validate and the revision
 * the editor started from. The body may be exactly what `GET /api/layouts/:slug` returned
 * with some change made (shared/contract/layoutEdit.ts): the read-only fields are checked for
 * shape and dropped, a missing `format` is the current one and `schematic: null` is no drawing.
 * Keys stay at the root, so the validator's paths are paths into the body as sent.
 */
import { layoutReadOnlyEchoSchema, LAYOUT_READ_ONLY_FIELDS } from "@shared/contract/layoutEdit";
import { LAYOUT_FORMAT } from "@shared/layout/schema";
import type { ValidationError } from "@shared/rulebook/validate";
import { zodDetails } from "../../http/errors";

export type RevisionCheck = { ok: true; value: number } | { ok: false; error: ValidationError };

export interface SaveBody {
  revision: RevisionCheck;
  /** Errors in the body outside the records (the read-only fields, a rulebook sent along). */
  errors: ValidationError[];
  records: unknown;
}

export function readSaveBody(body: unknown): SaveBody {
  if (typeof body !== "object" || body === null || Array.isArray(body)) {
    return { revision: { ok: false, error: { path: "$", message: "must be a layout file without rulebook, plus revision" } }, errors: [], records: body };
  }
  const { revision, rulebook, ...rest } = body as Record<string, unknown>;
  const value = typeof revision === "number" && Number.isInteger(revision) && revision > 0 ? revision : null;
  const check: RevisionCheck =
    value !== null ? { ok: true, value } : { ok: false, error: { path: "$.revision", message: "must be the revision number the layout was read at" } };

  const errors: ValidationError[] = [];
  // The rulebook is versioned on its own (drafts, proofs, publishing): never saved with the records.
  if (rulebook !== undefined) errors.push({ path: "$.rulebook", message: "is saved as a rulebook version, not with the records" });
  const echo = layoutReadOnlyEchoSchema.safeParse(rest);
  if (!echo.success) errors.push(...zodDetails(echo.error));
  const records: Record<string, unknown> = { ...rest };
  for (const field of LAYOUT_READ_ONLY_FIELDS) delete records[field];
  if (!("format" in records)) records.format = LAYOUT_FORMAT;
  if (records.schematic === null) delete records.schematic;
  return { revision: check, errors, records };
}
