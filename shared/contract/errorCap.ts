/**
 * A bound on the errors one reply lists. Validation lists every error it finds, which for a
 * large upload wrong in one way (500 nodes each naming missing detectors) is a reply of
 * hundreds of thousands of entries that no one reads; the first ones say what to fix.
 */
import type { ValidationError } from "../rulebook/validate";

export const MAX_REPORTED_ERRORS = 200;

/** The first errors, then one entry at `$` saying how many more there are; short lists as they are. */
export function capErrors(errors: readonly ValidationError[], max = MAX_REPORTED_ERRORS): ValidationError[] {
  if (errors.length <= max) return [...errors];
  const shown = errors.slice(0, max - 1);
  return [...shown, { path: "$", message: `… and ${errors.length - shown.length} more errors (fix these and save again to see the rest)` }];
}
