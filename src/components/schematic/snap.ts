/** Snapping to the editor's grid and keyboard nudges, in drawing units. */
import type { Pt } from "./format";

/** Positions along a line are kept to this step (10 cm of model track). */
export const AT_STEP_M = 0.1;

export function snapToGrid(p: Pt, grid: number): Pt {
  // `+ 0` turns -0 into 0, so a stored drawing never says -0.
  return [Math.round(p[0] / grid) * grid + 0, Math.round(p[1] / grid) * grid + 0];
}

/** A position in metres rounded to AT_STEP_M (and never below 0). */
export function snapMetres(at: number, step = AT_STEP_M): number {
  const snapped = Math.round(at / step) * step;
  // Keep the decimal clean: 0.1 × 3 is 0.30000000000000004 in floating point.
  return Math.max(0, Number(snapped.toFixed(6)));
}

export type ArrowKey = "ArrowLeft" | "ArrowRight" | "ArrowUp" | "ArrowDown";

export function isArrowKey(key: string): key is ArrowKey {
  return key === "ArrowLeft" || key === "ArrowRight" || key === "ArrowUp" || key === "ArrowDown";
}

/** One arrow key press: a grid step, or a fifth of one with Shift for fine placing. */
export function nudge(p: Pt, key: ArrowKey, grid: number, fine = false): Pt {
  const step = fine ? grid / 5 : grid;
  const [dx, dy] = { ArrowLeft: [-step, 0], ArrowRight: [step, 0], ArrowUp: [0, -step], ArrowDown: [0, step] }[key];
  return [p[0] + dx, p[1] + dy];
}
