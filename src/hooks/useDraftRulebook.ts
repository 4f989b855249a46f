import { useMemo } from "react";
import type { LayoutDetail } from "@shared/contract/rest";
import type { Rulebook } from "@shared/rulebook/schema";
import { validateRulebookFile } from "@shared/rulebook/validate";
import type { FieldError } from "../api/http";
import { readDraft, type StoredDraft } from "../lib/draftStore";

export type DraftRulebook = { ok: true; rulebook: Rulebook } | { ok: false; errors: FieldError[] } | null;

/**
 * The rulebook editor's unsaved draft of a layout, checked as the editor checks it (the engine
 * needs a sound rulebook). `check` false skips the check while the draft is not in use.
 */
export function useDraftRulebook(slug: string, layout: LayoutDetail | undefined, check: boolean): { stored: StoredDraft | null; draft: DraftRulebook } {
  const stored = useMemo(() => readDraft(slug), [slug]);
  const draft = useMemo<DraftRulebook>(() => {
    if (!check || !stored || !layout) return null;
    try {
      const result = validateRulebookFile(JSON.parse(stored.text), {
        detectors: layout.detectors.map((d) => d.id),
        signals: layout.signals.map((s) => ({ id: s.id, aspects: s.aspects })),
      });
      return result.ok ? { ok: true, rulebook: result.rulebook } : { ok: false, errors: result.errors };
    } catch (cause) {
      return { ok: false, errors: [{ path: "$", message: `Not valid JSON: ${String(cause)}` }] };
    }
  }, [check, stored, layout]);
  return { stored, draft };
}
