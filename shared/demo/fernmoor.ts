/**
 * Demo layouts of the (invented) Fernmoor Garden Railway Society, G scale 1:22.5.
 *
 * - Kestrel Bank Junction: the main line climbs the bank at 1 in 40, the quarry branch joins it
 *   on the bank, and the road from the bank-engine shed joins it just below the bank points.
 *   Three routes converge on one axle-counted section (see `templates.ts`); main-line trains
 *   have priority so they are never stopped on the gradient, then quarry trains, then engines
 *   off the shed. The shed road's signal and detectors are placed by the placement arithmetic
 *   from the society's measured figures (`kestrelShedRoad.ts`).
 * - Wrenfold Loop: a facing junction into a passing loop with power-worked points; the rulebook
 *   sends each train to the first free road and throws the points, whose board reports them.
 *
 * Distances are metres of model track. Approach detectors sit about 10 m before their
 * signal, entry detectors level with it, exit detectors beyond the fouling point. The same
 * files are kept as fixtures in `tests/fixtures/*.layout.json` (a test checks they match).
 *
 * Proving sizes: the fake layout (broker/fakeLayout/scenarios) never runs a train longer, or more
 * trains on one route at once, than the rulebook is proved for (its scenario check refuses longer
 * trains, its player holds a train off a full route; tests/unit/fakeLayout-proving.test.ts).
 * Both are proved for 8 axles (the most a rulebook may name) and 3 trains a route: Wrenfold Loop
 * in about 45,000 states, Kestrel Bank's three routes in about 675,000 (a few seconds, well inside
 * the server's 60 s; docs/prover.md, "Deferred stream axles").
 */
import type { LayoutFile } from "../layout/schema";
import { LAYOUT_FORMAT } from "../layout/schema";
import { convergingJunction, facingJunction } from "../rulebook/templates";
import { SHED_POINTS_MAIN_AT_M, shedRoadPlacement } from "./kestrelShedRoad";

const G_SCALE = { name: "G", ratio: 22.5 };

/** The trains each demo rulebook is proved for (see the module notes). */
export const KESTREL_MAX_AXLES = 8;
export const KESTREL_MAX_TRAINS = 3;
export const WRENFOLD_MAX_AXLES = 8;
export const WRENFOLD_MAX_TRAINS = 3;

/** Kestrel Bank Junction: main line, quarry branch and shed road converging on the bank. */
export function kestrelBankLayout(): LayoutFile {
  const shed = shedRoadPlacement();
  return {
    format: LAYOUT_FORMAT,
    slug: "kestrel-bank",
    name: "Kestrel Bank Junction",
    scale: { ...G_SCALE },
    lines: [
      { id: "main", name: "Main line (Kestrel Bank, 1 in 40)" },
      // Before the branch: the automatic drawing joins the n-th other line at the n-th points
      // along the main line, and the shed points come before the bank points.
      { id: "shed", name: "Loco shed road" },
      { id: "branch", name: "Quarry branch" },
    ],
    detectors: [
      { id: "MA", name: "Main approach", line: "main", at: 4.0 },
      { id: "ME", name: "Main entry", line: "main", at: 14.0 },
      { id: "JX", name: "Junction exit", line: "main", at: 19.5 },
      { id: "BA", name: "Branch approach", line: "branch", at: 2.5 },
      { id: "BE", name: "Branch entry", line: "branch", at: 12.5 },
      { id: "SA", name: "Shed approach", line: "shed", at: shed.approachDetectorAt },
      { id: "SE", name: "Shed entry", line: "shed", at: shed.signalAt },
    ],
    signals: [
      { id: "M1", name: "Main home", line: "main", at: 14.0, aspects: ["danger", "clear"] },
      { id: "B1", name: "Branch home", line: "branch", at: 12.5, aspects: ["danger", "caution", "clear"] },
      { id: "S1", name: "Shed exit", line: "shed", at: shed.signalAt, aspects: ["danger", "clear"] },
    ],
    points: [
      { id: "P1", name: "Bank points", line: "main", at: 16.0 },
      { id: "P3", name: "Shed points", line: "main", at: SHED_POINTS_MAIN_AT_M },
    ],
    nodes: [
      { id: "bank-foot", name: "Bank foot board", detectors: ["MA"], signals: [] },
      { id: "junction", name: "Junction board", detectors: ["ME", "JX"], signals: ["M1"] },
      { id: "quarry", name: "Quarry board", detectors: ["BA", "BE"], signals: ["B1"] },
      { id: "shed", name: "Loco shed board", detectors: ["SA", "SE"], signals: ["S1"] },
    ],
    schematic: {
      width: 640,
      height: 290,
      tracks: [
        { line: "main", points: [[20, 160], [620, 160]] },
        { line: "branch", points: [[20, 60], [300, 60], [380, 160]] },
        // The shed road joins from below, between the main home signal and the bank points.
        { line: "shed", points: [[20, 240], [280, 240], [345, 160]] },
      ],
      detectors: { MA: [100, 160], ME: [300, 160], JX: [450, 160], BA: [60, 60], BE: [250, 60], SA: [150, 240], SE: [235, 240] },
      signals: { M1: [300, 185], B1: [250, 35], S1: [235, 265] },
      points: { P1: [380, 160], P3: [345, 160] },
      labels: [
        { text: "to Fernmoor", at: [20, 200] },
        { text: "quarry", at: [20, 40] },
        { text: "loco shed", at: [20, 280] },
        { text: "up the bank (1 in 40)", at: [520, 200] },
      ],
    },
    rulebook: convergingJunction({
      routes: [
        { id: "main", signal: "M1", approach: ["MA"], entry: "ME", exit: ["JX"] },
        { id: "branch", signal: "B1", approach: ["BA"], entry: "BE", exit: ["JX"] },
        { id: "shed", signal: "S1", approach: ["SA"], entry: "SE", exit: ["JX"] },
      ],
      order: "priority",
      priority: "main",
      maxAxles: KESTREL_MAX_AXLES,
      maxTrainsPerRoute: KESTREL_MAX_TRAINS,
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
      maxAxles: WRENFOLD_MAX_AXLES,
      maxTrainsPerRoute: WRENFOLD_MAX_TRAINS,
    }),
  };
}
