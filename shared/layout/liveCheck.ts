/**
 * Would the live rulebook still hold together with these records? `PUT /api/layouts/:slug`
 * refuses records that take away a detector or signal the live rulebook uses, or an aspect it
 * shows; an editor can run the same check before saving.
 *
 * Each error names the rulebook's own place (`$.rulebook.rules[0].on.pass`) and, where the
 * cause is a record that is still there (a signal whose aspect list lost an aspect), that
 * record's field too (`$.signals[1].aspects`), so the message can sit beside the field.
 */
import type { Rulebook } from "../rulebook/schema";
import { rulebookContextOf, validateRulebookFile, type ValidationError } from "../rulebook/validate";
import type { LayoutRecords } from "./schema";

const CANNOT_SHOW = /^signal "([^"]+)" cannot show/;

export function liveRulebookErrors(records: Pick<LayoutRecords, "detectors" | "signals">, rulebook: Rulebook, version: number): ValidationError[] {
  const result = validateRulebookFile(rulebook, rulebookContextOf(records));
  if (result.ok) return [];
  const errors: ValidationError[] = [];
  for (const error of result.errors) {
    const path = `$.rulebook${error.path.slice(1)}`;
    const message = `the live rulebook (version ${version}) would break: ${error.message}`;
    const signal = CANNOT_SHOW.exec(error.message)?.[1];
    const index = signal === undefined ? -1 : records.signals.findIndex((s) => s.id === signal);
    if (index >= 0) errors.push({ path: `$.signals[${index}].aspects`, message: `${message} (at ${path})` });
    errors.push({ path, message });
  }
  return errors;
}
