/**
 * Demo layouts of the (invented) Fernmoor Garden Railway Society, G scale 1:22.5.
 *
 * - Kestrel Bank Junction: the main line climbs the bank at 1 in 40 and the quarry branch
 *   joins it on the bank. Main-line trains have priority so they are never stopped on the
 *   gradient. Axle-counted converging junction (see `templates.ts`).
 * - Wrenfold Loop: a facing junction into a passing loop with power-worked points; the rulebook
 *   sends each train to the first free road and throws the points, whose board reports them.
 *
 * Distances are metres of model track. Approach detectors sit about 10 m before their
 * signal, entry detectors level with it, exit detectors beyond the fouling point. The same
 * files are kept as fixtures in `tests/fixtures/*.layout.json` (a test checks they match).
 */
import type { LayoutFile } from "../layout/schema";
import { LAYOUT_FORMAT } from "../layout/schema";
import { convergingJunction, facingJunction } from "../rulebook/templates";

const G_SCALE = { name: "G", ratio: 22.5 };

/** Kestrel Bank Junction: main line and quarry branch converging on the bank. */
export function kestrelBankLayout(): LayoutFile {
  return {
    format: LAYOUT_FORMAT,
    slug: "kestrel-bank",
    name: "Kestrel Bank Junction",
    scale: { ...G_SCALE },
    lines: [
      { id: "main", name: "Main line (Kestrel Bank, 1 in 40)" },
      { id: "branch", name: "Quarry branch" },
    ],
    detectors: [
      { id: "MA", name: "Main approach", line: "main", at: 4.0 },
      { id: "ME", name: "Main entry", line: "main", at: 14.0 },
      { id: "JX", name: "Junction exit", line: "main", at: 19.5 },
      { id: "BA", name: "Branch approach", line: "branch", at: 2.5 },
      { id: "BE", name: "Branch entry", line: "branch", at: 12.5 },
    ],
    signals: [
      { id: "M1", name: "Main home", line: "main", at: 14.0, aspects: ["danger", "clear"] },
      { id: "B1", name: "Branch home", line: "branch", at: 12.5, aspects: ["danger", "caution", "clear"] },
    ],
    points: [{ id: "P1", name: "Bank points", line: "main", at: 16.0 }],
    nodes: [
      { id: "bank-foot", name: "Bank foot board", detectors: ["MA"], signals: [] },
      { id: "junction", name: "Junction board", detectors: ["ME", "JX"], signals: ["M1"] },
      { id: "quarry", name: "Quarry board", detectors: ["BA", "BE"], signals: ["B1"] },
    ],
    schematic: {
      width: 640,
      height: 240,
      tracks: [
        { line: "main", points: [[20, 160], [620, 160]] },
        { line: "branch", points: [[20, 60], [300, 60], [380, 160]] },
      ],
      detectors: { MA: [100, 160], ME: [300, 160], JX: [450, 160], BA: [60, 60], BE: [250, 60] },
      signals: { M1: [300, 185], B1: [250, 35] },
      points: { P1: [380, 160] },
      labels: [
        { text: "to Fernmoor", at: [20, 200] },
        { text: "quarry", at: [20, 40] },
        { text: "up the bank (1 in 40)", at: [520, 200] },
      ],
    },
    rulebook: convergingJunction({
      routes: [
        { id: "main", signal: "M1", approach: ["MA"], entry: "ME", exit: ["JX"] },
        { id: "branch", signal: "B1", approach: ["BA"], entry: "BE", exit: ["JX"] },
      ],
      order: "priority",
      priority: "main",
      maxAxles: 2,
      maxTrainsPerRoute: 2,
    }),
  };
}

/** Wrenfold Loop: a facing junction into a passing loop, power-worked points, first free road. */
export function wrenfoldLoopLayout(): LayoutFile {
  return {
    format: LAYOUT_FORMAT,
    slug: "wrenfold-loop",
    name: "Wrenfold Loop",
    scale: { ...G_SCALE },
    lines: [
      { id: "main", name: "Wrenfold through road" },
      { id: "loop", name: "Wrenfold loop road" },
    ],
    detectors: [
      { id: "WA", name: "Wrenfold approach", line: "main", at: 2.0 },
      { id: "WE", name: "Wrenfold entry", line: "main", at: 12.0 },
      { id: "TX", name: "Through road clear of points", line: "main", at: 17.5 },
      { id: "TZ", name: "Through road end", line: "main", at: 36.0 },
      { id: "LX", name: "Loop road clear of points", line: "loop", at: 3.0 },
      { id: "LZ", name: "Loop road end", line: "loop", at: 21.5 },
    ],
    signals: [{ id: "W1", name: "Wrenfold home", line: "main", at: 12.0, aspects: ["danger", "caution", "clear"] }],
    points: [{ id: "P2", name: "Loop points", line: "main", at: 14.5, worked: "power" }],
    nodes: [
      { id: "wrenfold-home", name: "Home signal board", detectors: ["WA", "WE"], signals: ["W1"] },
      { id: "loop-points", name: "Loop points board", detectors: ["TX", "LX"], signals: [], points: ["P2"] },
      { id: "loop-end", name: "Loop end board", detectors: ["TZ", "LZ"], signals: [] },
    ],
    schematic: {
      width: 720,
      height: 200,
      tracks: [
        { line: "main", points: [[20, 140], [700, 140]] },
        { line: "loop", points: [[250, 140], [310, 70], [620, 70], [680, 140]] },
      ],
      detectors: { WA: [60, 140], WE: [200, 140], TX: [330, 140], TZ: [600, 140], LX: [330, 70], LZ: [600, 70] },
      signals: { W1: [200, 165] },
      points: { P2: [250, 140] },
      labels: [{ text: "Wrenfold Loop", at: [400, 40] }],
    },
    rulebook: facingJunction({
      signal: "W1",
      approach: ["WA"],
      entry: "WE",
      points: "P2",
      roads: [
        { id: "through", exit: ["TX", "TZ"] },
        { id: "loop", exit: ["LX", "LZ"] },
      ],
      worked: "power",
      maxAxles: 2,
      maxTrainsPerRoute: 2,
    }),
  };
}
