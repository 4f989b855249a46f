/**
 * One key order for layout files (and for the records without a rulebook), the same in the
 * export, the stored JSON and the editor: `format`, `slug`, `name`, `scale`, `lines`,
 * `detectors`, `signals`, `points`, `nodes`, `schematic`, `rulebook` (itself in the order of
 * `canonicalRulebook`), and within each record `id`, `name`, then its fields.
 *
 * @example
 * const text = JSON.stringify(canonicalLayout(file), null, 2);
 */
import { canonicalRulebook, orderKeys } from "../rulebook/canonical";

export const LAYOUT_KEY_ORDER = ["format", "slug", "name", "scale", "lines", "detectors", "signals", "points", "nodes", "schematic", "rulebook"] as const;
const RECORD_KEY_ORDER = ["id", "name", "line", "at", "aspects", "worked", "detectors", "signals", "points"] as const;
const SCALE_KEY_ORDER = ["name", "ratio"] as const;
const RECORD_LISTS = ["lines", "detectors", "signals", "points", "nodes"] as const;

/** The layout file (or records) with keys in the canonical order; values are not changed. */
export function canonicalLayout<T>(file: T): T {
  if (typeof file !== "object" || file === null || Array.isArray(file)) return file;
  const top = orderKeys(file as Record<string, unknown>, LAYOUT_KEY_ORDER);
  if ("scale" in top) top.scale = orderKeys(top.scale, SCALE_KEY_ORDER);
  for (const list of RECORD_LISTS) {
    if (Array.isArray(top[list])) top[list] = (top[list] as unknown[]).map((record) => orderKeys(record, RECORD_KEY_ORDER));
  }
  if ("rulebook" in top) top.rulebook = canonicalRulebook(top.rulebook);
  return top as T;
}
