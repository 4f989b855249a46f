import { describe, expect, it } from "vitest";
import { kestrelTwoRoutesLayout } from "../fixtures/kestrelTwoRoutes";
import { layoutGeometry, labelKey, LABEL_FONT } from "../../src/components/mimic/geometry";
import { addTrack, insertVertex, migrateForEditing, moveItemTo, moveLabel, moveVertex, placeNewItem, removeVertex, setItemAt, type DrawingDoc } from "../../src/components/schematic/edits";
import { emptySchematic, parseSchematic, serializeSchematic, type Pt } from "../../src/components/schematic/format";
import { canRedo, canUndo, endGesture, record, redo, startHistory, undo } from "../../src/components/schematic/history";
import { overlaps, textBox } from "../../src/components/schematic/labels";
import { nudge, snapMetres, snapToGrid } from "../../src/components/schematic/snap";
import { metresAtPoint, nearestTrack, pointAtMetres } from "../../src/components/schematic/trackMetres";

const straight = { line: "main", points: [[0, 0], [400, 0]] as Pt[], metres: [0, 20] as [number, number] };
const bent = { line: "branch", points: [[0, 100], [300, 100], [300, 0]] as Pt[], metres: [10, 30] as [number, number] };

describe("at ↔ point on a track", () => {
  it.each([
    [0, [0, 0]],
    [5, [100, 0]],
    [20, [400, 0]],
    [25, [400, 0]], // beyond the span: clamped to the end
  ] as const)("puts %s m of a 0–20 m straight track at %j", (at, point) => {
    expect(pointAtMetres([straight], "main", at, 99)).toEqual(point);
  });

  it("follows a bent track by drawn length, from the span's first metre", () => {
    // 400 units drawn for 20 m: 20 units a metre; 25 m is 300 units along, the corner.
    expect(pointAtMetres([bent], "branch", 25, 99)).toEqual([300, 100]);
    expect(pointAtMetres([bent], "branch", 27.5, 99)).toEqual([300, 50]);
  });

  it("maps a drawn point back to metres and how far off the track it is", () => {
    expect(metresAtPoint(straight, [100, 30], 99)).toEqual({ at: 5, gap: 30, along: 100 });
    const back = metresAtPoint(bent, [320, 50], 99);
    expect(back.at).toBeCloseTo(27.5);
    expect(back.gap).toBeCloseTo(20);
  });

  it("round-trips at → point → at", () => {
    for (const at of [10, 12.3, 19.9, 24, 29.5]) {
      const p = pointAtMetres([bent], "branch", at, 99)!;
      expect(metresAtPoint(bent, p, 99).at).toBeCloseTo(at, 6);
    }
  });

  it("uses the line's length estimate when a track has no metres (version 1)", () => {
    expect(pointAtMetres([{ line: "main", points: [[0, 0], [100, 0]] }], "main", 5, 10)).toEqual([50, 0]);
  });

  it("says which track is nearest, optionally of one line", () => {
    expect(nearestTrack([straight, bent], [200, 90])?.index).toBe(1);
    expect(nearestTrack([straight, bent], [200, 90], "main")?.index).toBe(0);
    expect(nearestTrack([straight], [0, 0], "nowhere")).toBeNull();
  });
});

describe("snapping and nudging", () => {
  it.each([
    [[11, 29], 20, [20, 20]],
    [[-11, 9], 20, [-20, 0]],
    [[7, 7], 5, [5, 5]],
  ] as const)("snaps %j to a grid of %s as %j", (p, grid, out) => {
    expect(snapToGrid([...p] as Pt, grid)).toEqual(out);
  });

  it("keeps metres to 10 cm with clean decimals and never below 0", () => {
    expect(snapMetres(0.30000000000000004)).toBe(0.3);
    expect(snapMetres(4.04)).toBe(4);
    expect(snapMetres(-0.2)).toBe(0);
  });

  it.each([
    ["ArrowLeft", false, [80, 100]],
    ["ArrowRight", false, [120, 100]],
    ["ArrowUp", false, [100, 80]],
    ["ArrowDown", true, [100, 104]],
  ] as const)("nudges with %s (fine %s)", (key, fine, out) => {
    expect(nudge([100, 100], key, 20, fine)).toEqual(out);
  });
});

describe("undo history", () => {
  it("undoes and redoes whole documents", () => {
    let h = startHistory({ n: 0 });
    h = record(h, { n: 1 });
    h = record(h, { n: 2 });
    h = undo(h);
    expect(h.present).toEqual({ n: 1 });
    expect(canRedo(h)).toBe(true);
    h = redo(h);
    expect(h.present).toEqual({ n: 2 });
    h = undo(undo(h));
    expect(h.present).toEqual({ n: 0 });
    expect(canUndo(h)).toBe(false);
    expect(undo(h)).toBe(h);
  });

  it("takes back one drag in one step and forgets the redo branch on a new edit", () => {
    let h = startHistory(0);
    h = record(h, 1, "drag-MA");
    h = record(h, 2, "drag-MA");
    h = record(h, 3, "drag-MA");
    h = endGesture(h);
    h = record(h, 4, "drag-MA");
    expect(undo(h).present).toBe(3);
    expect(undo(undo(h)).present).toBe(0);
    const branched = record(undo(h), 9);
    expect(canRedo(branched)).toBe(false);
  });
});

function doc(): DrawingDoc {
  return {
    lines: [{ id: "main", name: "Main" }, { id: "branch", name: "Branch" }],
    detectors: [
      { id: "MA", name: "Main approach", line: "main", at: 4 },
      { id: "ME", name: "Main entry", line: "main", at: 14 },
    ],
    signals: [{ id: "M1", name: "Main home", line: "main", at: 14, aspects: ["danger", "clear"] }],
    points: [],
    schematic: { ...emptySchematic(), tracks: [straight, bent] },
  };
}

describe("editing a drawing", () => {
  it("dragging a detector along its line changes its at, and the order follows positions", () => {
    const next = moveItemTo(doc(), "detectors", "MA", [330, 12], 20);
    // Snapped to the grid (340, 20), on the track at 340 units = 17 m.
    expect(next.detectors.find((d) => d.id === "MA")).toMatchObject({ line: "main", at: 17 });
    expect(next.detectors.map((d) => d.id)).toEqual(["ME", "MA"]);
  });

  it("editing at moves the detector on the drawing", () => {
    const next = setItemAt(doc(), "detectors", "MA", 10);
    expect(layoutGeometry({ ...next, schematic: serializeSchematic(next.schematic, { detectors: ["MA", "ME"], signals: ["M1"], points: [] }) }).detectors.MA).toEqual([200, 0]);
  });

  it("dropping onto another line's track moves the item to that line", () => {
    const next = moveItemTo(doc(), "detectors", "MA", [300, 40], null);
    expect(next.detectors.find((d) => d.id === "MA")).toMatchObject({ line: "branch", at: 28 });
  });

  it("ignores a drop far from every track", () => {
    const before = doc();
    expect(moveItemTo(before, "detectors", "MA", [900, 900], null)).toBe(before);
    expect(placeNewItem(before, "signals", [900, 900], null)).toBeNull();
  });

  it("places new items from the palette with free ids on the nearest line", () => {
    const placed = placeNewItem(doc(), "detectors", [61, -7], 20)!;
    expect(placed.id).toBe("D1");
    expect(placed.doc.detectors[0]).toMatchObject({ id: "D1", line: "main", at: 3 });
    const points = placeNewItem(placed.doc, "points", [300, 60], null)!;
    expect(points.doc.points[0]).toMatchObject({ id: "P1", line: "branch", worked: "hand" });
  });

  it("draws, bends and straightens tracks; vertices snap to the grid", () => {
    let d = addTrack({ ...doc(), schematic: emptySchematic() }, "main", [[0, 0], [400, 0]]);
    // Items already on the line keep their positions: the span is the line's length (14 m + 10 %).
    expect(d.schematic.tracks[0].metres).toEqual([0, 15.5]);
    // An empty line is read at 30 units a metre.
    expect(addTrack({ ...doc(), schematic: emptySchematic() }, "branch", [[0, 0], [300, 0], [300, 300]]).schematic.tracks[0].metres).toEqual([0, 20]);
    d = insertVertex(d, 0, [203, 38], 20);
    expect(d.schematic.tracks[0].points).toEqual([[0, 0], [200, 40], [400, 0]]);
    d = moveVertex(d, 0, 1, [211, -3], 20);
    expect(d.schematic.tracks[0].points[1]).toEqual([220, 0]);
    d = removeVertex(d, 0, 1);
    expect(d.schematic.tracks[0].points).toHaveLength(2);
    expect(removeVertex(d, 0, 0)).toBe(d);
  });

  it("keeps moved labels in the stored drawing, and drops those of removed items", () => {
    const d = moveLabel(doc(), "detectors", "MA", [10, -20]);
    const stored = serializeSchematic(d.schematic, { detectors: ["MA"], signals: [], points: [] });
    expect(stored.labelOffsets).toEqual({ detectors: { MA: [10, -20] } });
    expect(serializeSchematic(d.schematic, { detectors: [], signals: [], points: [] }).labelOffsets).toEqual({});
    const g = layoutGeometry({ ...d, schematic: stored });
    expect(g.labelOffsets[labelKey("detectors", "MA")]).toEqual([10, -20]);
  });
});

describe("older drawings", () => {
  it("reads a version 1 schematic and migrates it without moving the tracks or signal lamps", () => {
    const kestrel = kestrelTwoRoutesLayout();
    const before = layoutGeometry(kestrel);
    const { doc: migrated, moved } = migrateForEditing({ ...kestrel, schematic: parseSchematic(kestrel.schematic) });
    expect(moved).toBe(6); // five detectors and one points were pinned by hand
    const ids = { detectors: kestrel.detectors.map((d) => d.id), signals: kestrel.signals.map((s) => s.id), points: kestrel.points.map((p) => p.id) };
    const stored = serializeSchematic(migrated.schematic, ids);
    const after = layoutGeometry({ ...kestrel, schematic: stored });
    expect(after.tracks.map((t) => t.points)).toEqual(before.tracks.map((t) => t.points));
    for (const s of kestrel.signals) {
      expect(after.signals[s.id][0]).toBeCloseTo(before.signals[s.id][0]);
      expect(after.signals[s.id][1]).toBeCloseTo(before.signals[s.id][1]);
    }
    expect(stored.version).toBe(2);
    expect(parseSchematic(stored).version).toBe(2);
  });

  it("ignores malformed parts", () => {
    const s = parseSchematic({ tracks: [{ line: "main", points: [[0, 0]] }, { line: 3 }, { line: "ok", points: [[0, 0], [1, "x"]] }], labels: [{ text: 5 }], detectors: { A: [1] } });
    expect(s.tracks).toEqual([]);
    expect(s.labels).toEqual([]);
    expect(s.pinned.detectors).toEqual({});
  });
});

describe("automatic drawing", () => {
  it.each([
    ["Kestrel Bank without a schematic", () => ({ ...kestrelTwoRoutesLayout(), schematic: undefined })],
    [
      "a crowded line",
      () => ({
        lines: [{ id: "main", name: "Main" }],
        detectors: [0, 0.5, 1, 1.2, 2, 2.1].map((at, i) => ({ id: `DET${i}`, name: `d${i}`, line: "main", at })),
        signals: [0.4, 1.1, 2].map((at, i) => ({ id: `SIG${i}`, name: `s${i}`, line: "main", at, aspects: ["danger" as const, "clear" as const] })),
        points: [{ id: "P1", name: "p", line: "main", at: 1 }],
      }),
    ],
  ])("puts no id label on top of another (%s)", (_name, make) => {
    const layout = make();
    const g = layoutGeometry(layout);
    const boxes = [
      ...layout.detectors.map((d) => ({ id: d.id, box: boxFor(g.detectors[d.id], g.labelOffsets[labelKey("detectors", d.id)], d.id, LABEL_FONT.detectors, "middle") })),
      ...layout.points.map((p) => ({ id: p.id, box: boxFor(g.points[p.id], g.labelOffsets[labelKey("points", p.id)], p.id, LABEL_FONT.points, "middle") })),
      ...layout.signals.map((s) => ({ id: s.id, box: boxFor(g.signals[s.id], g.labelOffsets[labelKey("signals", s.id)], s.id, LABEL_FONT.signals, "start") })),
    ];
    for (let i = 0; i < boxes.length; i++) for (let j = i + 1; j < boxes.length; j++) expect(overlaps(boxes[i].box, boxes[j].box), `${boxes[i].id} and ${boxes[j].id}`).toBe(false);
  });
});

function boxFor(at: Pt, offset: Pt, text: string, font: number, anchor: "middle" | "start") {
  // As drawn on the display (scale 1.25), the larger of the two.
  return textBox(text, [at[0] + offset[0] * 1.25, at[1] + offset[1] * 1.25], font * 1.25, anchor);
}
