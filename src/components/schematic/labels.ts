/**
 * Where the id labels of detectors, points and signals go when nobody has placed them:
 * each label tries a few spots round its item, in order, and takes the first whose box
 * overlaps no item's mark and no label already placed (greedy, in drawing order). When
 * every spot is taken it moves further out, so two labels never share a box.
 */
import type { ItemKind, Pt } from "./format";

export interface Box {
  x0: number;
  y0: number;
  x1: number;
  y1: number;
}

export function overlaps(a: Box, b: Box): boolean {
  return a.x0 < b.x1 && b.x0 < a.x1 && a.y0 < b.y1 && b.y0 < a.y1;
}

/** Width of one character of a 12-unit label in the mimic's monospace font (0.62 em). */
export const LABEL_CHAR_WIDTH = 7.5;
/** Labels are sized for the display's larger lettering, so they stay apart there too. */
export const LABEL_SCALE_MAX = 1.25;

/** The box of a text drawn with its anchor (middle or start of the baseline) at `at`. */
export function textBox(text: string, at: Pt, fontSize: number, anchor: "middle" | "start"): Box {
  const w = text.length * LABEL_CHAR_WIDTH * (fontSize / 12);
  const x0 = anchor === "middle" ? at[0] - w / 2 : at[0];
  return { x0, x1: x0 + w, y0: at[1] - fontSize * 0.85, y1: at[1] + fontSize * 0.25 };
}

export interface LabelRequest {
  kind: ItemKind;
  id: string;
  /** The item's drawn position; offsets are relative to it. */
  anchor: Pt;
  fontSize: number;
  textAnchor: "middle" | "start";
  /** Offsets to try, best first. */
  candidates: Pt[];
}

/** Offsets per kind, tried in order: detectors below then above, signals right then left… */
export const LABEL_CANDIDATES: Record<ItemKind, Pt[]> = {
  detectors: [[0, 24], [0, -16], [0, 40], [0, -32]],
  points: [[0, -12], [0, 22], [16, -12], [-16, -12]],
  signals: [[17, 5], [-17 - 2 * LABEL_CHAR_WIDTH * 1.25, 5], [0, -20], [0, 34]],
};

const textOf = (r: LabelRequest) => r.id;

function boxAt(r: LabelRequest, offset: Pt, scale: number): Box {
  return textBox(textOf(r), [r.anchor[0] + offset[0] * scale, r.anchor[1] + offset[1] * scale], r.fontSize * scale, r.textAnchor);
}

/**
 * Offsets for every label (keyed `kind:id`), none overlapping another label or an obstacle,
 * with boxes measured at `scale` (offsets scale with it, as the mimic draws them).
 */
export function placeLabels(requests: readonly LabelRequest[], obstacles: readonly Box[], scale = LABEL_SCALE_MAX): Record<string, Pt> {
  const placed: Box[] = [];
  const out: Record<string, Pt> = {};
  for (const r of requests) {
    const free = (offset: Pt) => {
      const box = boxAt(r, offset, scale);
      return !placed.some((b) => overlaps(b, box)) && !obstacles.some((o) => overlaps(o, box));
    };
    let chosen = r.candidates.find(free);
    // Everything near is taken: step further out, alternating below and above.
    for (let ring = 1; !chosen && ring <= 40; ring++) {
      const base = r.candidates[0];
      for (const dir of [1, -1]) {
        const offset: Pt = [base[0], base[1] + dir * ring * 16];
        if (free(offset)) {
          chosen = offset;
          break;
        }
      }
    }
    chosen ??= r.candidates[0];
    out[`${r.kind}:${r.id}`] = chosen;
    placed.push(boxAt(r, chosen, scale));
  }
  return out;
}

/** The marks drawn for each item, as boxes labels must keep off. */
export function markBox(kind: ItemKind, at: Pt, scale = LABEL_SCALE_MAX): Box {
  const half = kind === "signals" ? 17 * scale : kind === "points" ? 8 * scale : 9 * scale;
  const halfW = kind === "detectors" ? 4 * scale : half;
  return { x0: at[0] - halfW, x1: at[0] + halfW, y0: at[1] - half, y1: at[1] + half };
}
