/**
 * The unsaved rulebook draft of one layout, kept in sessionStorage so it survives a trip
 * from the rulebook editor to the simulator and back (and a reload), but not the tab.
 */
export interface StoredDraft {
  /** The editor's text exactly as typed. */
  text: string;
  /** The stored version the draft started from. */
  basedOn: number | null;
  savedAt: string;
}

const keyFor = (slug: string) => `blocklight.draft.${slug}`;

function storage(): Storage | null {
  try {
    return typeof window === "undefined" ? null : window.sessionStorage;
  } catch {
    // Storage can be switched off by browser privacy settings; the draft then lives in memory only.
    return null;
  }
}

export function readDraft(slug: string): StoredDraft | null {
  const raw = storage()?.getItem(keyFor(slug));
  if (!raw) return null;
  try {
    const value = JSON.parse(raw) as StoredDraft;
    return typeof value.text === "string" ? value : null;
  } catch {
    return null;
  }
}

export function writeDraft(slug: string, draft: Omit<StoredDraft, "savedAt">): void {
  storage()?.setItem(keyFor(slug), JSON.stringify({ ...draft, savedAt: new Date().toISOString() }));
}

export function clearDraft(slug: string): void {
  storage()?.removeItem(keyFor(slug));
}
