/**
 * The engineer's workbench over REST: create an empty layout, edit its records with a
 * revision (stale saves refused), refuse records that would break the live rulebook,
 * keep node secrets through edits, archive (stops running live, read-only) and restore.
 */
import { QueryTypes } from "sequelize";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { LayoutDetail } from "@shared/contract/rest";
import { kestrelBankLayout } from "@shared/demo/fernmoor";
import { startLiveHarness, waitFor, type LiveHarness } from "../support/live";
import { startTestApp, type TestApp } from "../support/testApp";

type Agent = Awaited<ReturnType<TestApp["signIn"]>>;

const G_SCALE = { name: "G", ratio: 22.5 };

/** Records for a small invented siding at Fernmoor: one line, two detectors, a signal, points, a board. */
function sidingRecords(slug: string, revision: number) {
  return {
    format: "blocklight.layout/1",
    slug,
    name: "Fernmoor coal siding",
    scale: G_SCALE,
    lines: [{ id: "siding", name: "Coal siding" }],
    detectors: [
      { id: "CA", name: "Siding approach", line: "siding", at: 1.5 },
      { id: "CE", name: "Siding entry", line: "siding", at: 11.5 },
    ],
    signals: [{ id: "C1", name: "Siding home", line: "siding", at: 11.5, aspects: ["danger", "clear"] }],
    points: [{ id: "P9", name: "Siding points", line: "siding", at: 13, worked: "power" }],
    nodes: [{ id: "siding-board", name: "Siding board", detectors: ["CA", "CE"], signals: ["C1"], points: ["P9"] }],
    schematic: { width: 400, height: 120, tracks: [{ line: "siding", points: [[20, 60], [380, 60]] }] },
    revision,
  };
}

/** The demo layout's records as `GET` returns them, ready to send back with a change. */
async function recordsOf(agent: Agent, slug: string) {
  const res = await agent.get(`/api/layouts/${slug}`);
  expect(res.status).toBe(200);
  const layout = res.body.layout as LayoutDetail;
  const { versions: _versions, liveVersion: _live, archivedAt: _archived, schematic, ...rest } = layout;
  return { format: "blocklight.layout/1", ...rest, ...(schematic ? { schematic } : {}) };
}

describe("creating and editing layouts", () => {
  let t: TestApp;
  let engineer: Agent;
  let admin: Agent;
  let live: LiveHarness;
  beforeAll(async () => {
    t = await startTestApp();
    engineer = await t.signIn("engineer");
    admin = await t.signIn("admin");
    live = await startLiveHarness(t);
  });
  afterAll(async () => {
    await live?.close();
    await t.close();
  });

  it("creates an empty layout with revision 1 and no rulebook, and refuses a taken or malformed slug", async () => {
    const res = await engineer.post("/api/layouts").send({ slug: "coal-siding", name: "Fernmoor coal siding", scale: G_SCALE });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body.layout).toMatchObject({ slug: "coal-siding", revision: 1, liveVersion: null, archivedAt: null, lines: [], detectors: [], nodes: [], versions: [] });

    const again = await engineer.post("/api/layouts").send({ slug: "coal-siding", name: "Again", scale: G_SCALE });
    expect(again.status).toBe(409);
    const bad = await engineer.post("/api/layouts").send({ slug: "Coal Siding!", name: "", scale: { name: "G", ratio: -1 } });
    expect(bad.status).toBe(400);
    expect(bad.body.error.details.map((d: { path: string }) => d.path)).toEqual(expect.arrayContaining(["$.slug", "$.name", "$.scale.ratio"]));
    // No rulebook yet: nothing runs live and there is no complete file to export.
    expect((await engineer.get("/api/layouts/coal-siding/export")).status).toBe(409);
  });

  it("saves records at the current revision, in the author's order, and moves the revision on", async () => {
    const res = await engineer.put("/api/layouts/coal-siding").send(sidingRecords("coal-siding", 1));
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    const layout = res.body.layout as LayoutDetail;
    expect(layout.revision).toBe(2);
    expect(layout.detectors.map((d) => d.id)).toEqual(["CA", "CE"]);
    expect(layout.points).toEqual([{ id: "P9", name: "Siding points", line: "siding", at: 13, worked: "power" }]);
    expect(layout.nodes).toEqual([{ id: "siding-board", name: "Siding board", detectors: ["CA", "CE"], signals: ["C1"], points: ["P9"] }]);
    expect(layout.schematic).toEqual(sidingRecords("coal-siding", 1).schematic);

    const rows = await t.deps.db.models.DetectorRecord.findAll({ where: { layoutId: (await t.deps.db.models.Layout.findOne({ where: { slug: "coal-siding" } }))!.id }, order: [["position", "ASC"]] });
    expect(rows.map((r) => [r.detectorId, r.lineId, r.at])).toEqual([["CA", "siding", 1.5], ["CE", "siding", 11.5]]);
  });

  it("refuses a save from a stale revision with 409 and changes nothing", async () => {
    const stale = { ...sidingRecords("coal-siding", 1), name: "Overwritten" };
    const res = await engineer.put("/api/layouts/coal-siding").send(stale);
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe("stale_revision");
    expect(res.body.error.message).toMatch(/someone else saved/);
    const now = await engineer.get("/api/layouts/coal-siding");
    expect(now.body.layout).toMatchObject({ revision: 2, name: "Fernmoor coal siding" });
  });

  it("lists every error of the records with its path, and changes nothing", async () => {
    // Broken on purpose, edited loosely as a person editing JSON would.
    // eslint-disable-next-line @typescript-eslint/no-explicit-any -- deliberately malformed records
    const body = sidingRecords("coal-siding", 2) as Record<string, any>;
    body.detectors[0].line = "nowhere";
    body.nodes[0].points = ["P404"];
    body.signals[0].aspects = ["clear"];
    body.slug = "coal-siding-2";
    delete body.revision;
    const res = await engineer.put("/api/layouts/coal-siding").send(body);
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe("invalid_layout");
    const paths = res.body.error.details.map((d: { path: string }) => d.path);
    expect(paths).toEqual(expect.arrayContaining(["$.revision", "$.detectors[0].line", "$.nodes[0].points[0]", "$.signals[0].aspects"]));
    expect((await engineer.get("/api/layouts/coal-siding")).body.layout.revision).toBe(2);

    const renamed = await engineer.put("/api/layouts/coal-siding").send({ ...sidingRecords("coal-siding-2", 2) });
    expect(renamed.status).toBe(400);
    expect(renamed.body.error.details).toEqual([expect.objectContaining({ path: "$.slug" })]);
    const withRulebook = await engineer.put("/api/layouts/coal-siding").send({ ...sidingRecords("coal-siding", 2), rulebook: kestrelBankLayout().rulebook });
    expect(withRulebook.status).toBe(400);
    expect(withRulebook.body.error.details.map((d: { path: string }) => d.path)).toContain("$.rulebook");
  });

  it("refuses records the live rulebook would no longer validate against, naming each place", async () => {
    const records = await recordsOf(engineer, "kestrel-bank");
    const branchHome = records.signals.findIndex((s) => s.id === "B1");
    records.signals[branchHome] = { ...records.signals[branchHome], aspects: ["danger", "caution"] };
    records.detectors = records.detectors.filter((d) => d.id !== "MA");
    records.nodes = records.nodes.map((n) => ({ ...n, detectors: n.detectors.filter((d) => d !== "MA") }));
    const res = await engineer.put("/api/layouts/kestrel-bank").send(records);
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe("breaks_live_rulebook");
    const details = res.body.error.details as { path: string; message: string }[];
    const rulebook = kestrelBankLayout().rulebook;
    const mainApproach = rulebook.rules.findIndex((r) => r.id === "main-approach");
    expect(details.map((d) => d.path)).toEqual(
      expect.arrayContaining([`$.signals[${branchHome}].aspects`, `$.rulebook.rules[${mainApproach}].on.pass`, "$.rulebook.proving.routes[0].approach[0]"]),
    );
    expect(details.every((d) => d.message.includes("live rulebook (version 1)"))).toBe(true);
    const after = await engineer.get("/api/layouts/kestrel-bank");
    expect(after.body.layout.revision).toBe(records.revision);
    expect(after.body.layout.detectors.map((d: { id: string }) => d.id)).toContain("MA");
  });

  it("keeps a board's secret when its record is edited, and never shows it", async () => {
    const issued = await engineer.post("/api/layouts/kestrel-bank/nodes").send({ id: "bank-foot", name: "Bank foot board", detectors: ["MA"], signals: [] });
    expect(issued.status).toBe(201);
    const hash = async () =>
      (await t.deps.db.sequelize.query<{ secret_hash: string | null }>("SELECT secret_hash FROM nodes WHERE node_id = 'bank-foot'", { type: QueryTypes.SELECT }))[0].secret_hash;
    const before = await hash();
    expect(before).toMatch(/^sha256:/); // node secrets are 192-bit random: a keyed digest, not a password hash (server/nodeSecret.ts)

    const records = await recordsOf(engineer, "kestrel-bank");
    records.nodes = records.nodes.map((n) => (n.id === "bank-foot" ? { ...n, name: "Bank foot board (renamed)" } : n));
    records.lines = records.lines.map((l) => (l.id === "main" ? { ...l, name: "Main line up the bank" } : l));
    const saved = await engineer.put("/api/layouts/kestrel-bank").send(records);
    expect(saved.status, JSON.stringify(saved.body)).toBe(200);
    expect(await hash()).toBe(before);
    const text = JSON.stringify(saved.body) + JSON.stringify((await engineer.get("/api/layouts/kestrel-bank/export")).body);
    expect(text).not.toMatch(/secret/i);
    expect(text).not.toContain(issued.body.secret);
    expect(text).toContain("Bank foot board (renamed)");
  });

  it("takes back exactly what GET returned, changed: GET → rename → PUT → GET, with and without a schematic", async () => {
    // Without a schematic: GET gives `schematic: null`, no `format`, and the read-only fields.
    const created = await engineer.post("/api/layouts").send({ slug: "goods-yard", name: "Fernmoor goods yard", scale: G_SCALE });
    expect(created.status).toBe(201);
    const bare = (await engineer.get("/api/layouts/goods-yard")).body.layout as LayoutDetail;
    expect(bare).toMatchObject({ schematic: null, versions: [], liveVersion: null, archivedAt: null });
    const bareSaved = await engineer.put("/api/layouts/goods-yard").send({ ...bare, name: "Fernmoor goods yard (east)" });
    expect(bareSaved.status, JSON.stringify(bareSaved.body)).toBe(200);
    const bareAfter = (await engineer.get("/api/layouts/goods-yard")).body.layout as LayoutDetail;
    expect(bareAfter).toEqual({ ...bare, name: "Fernmoor goods yard (east)", revision: bare.revision + 1 });
    expect(bareSaved.body.layout).toEqual(bareAfter);

    // With a schematic, records, published versions and a live rulebook.
    const before = (await engineer.get("/api/layouts/kestrel-bank")).body.layout as LayoutDetail;
    expect(before.schematic).not.toBeNull();
    expect(before.liveVersion).toBe(1);
    const lines = before.lines.map((l) => (l.id === "branch" ? { ...l, name: "Quarry branch (renamed)" } : l));
    expect(lines).not.toEqual(before.lines);
    const saved = await engineer.put("/api/layouts/kestrel-bank").send({ ...before, lines });
    expect(saved.status, JSON.stringify(saved.body)).toBe(200);
    const after = (await engineer.get("/api/layouts/kestrel-bank")).body.layout as LayoutDetail;
    expect(after).toEqual({ ...before, lines, revision: before.revision + 1 });

    // A null schematic on a layout that had one removes the drawing.
    const cleared = await engineer.put("/api/layouts/kestrel-bank").send({ ...after, schematic: null });
    expect(cleared.status, JSON.stringify(cleared.body)).toBe(200);
    expect(cleared.body.layout.schematic).toBeNull();
    expect((await engineer.get("/api/layouts/kestrel-bank/export")).body).not.toHaveProperty("schematic");
    // Put it back for the tests that follow, and check read-only fields of the wrong shape are still refused.
    const restored = await engineer.put("/api/layouts/kestrel-bank").send({ ...cleared.body.layout, schematic: before.schematic });
    expect(restored.status).toBe(200);
    const wrong = await engineer.put("/api/layouts/kestrel-bank").send({ ...restored.body.layout, liveVersion: "one", format: "blocklight.layout/9" });
    expect(wrong.status).toBe(400);
    expect(wrong.body.error.details.map((d: { path: string }) => d.path)).toEqual(expect.arrayContaining(["$.liveVersion", "$.format"]));
  });

  it("reports a list over its bound once, without an error for every reference into it", async () => {
    const before = (await engineer.get("/api/layouts/goods-yard")).body.layout as LayoutDetail;
    const ids = Array.from({ length: 10_000 }, (_, i) => `D${i}`);
    const body = {
      ...before,
      lines: [{ id: "yard", name: "Yard road" }],
      detectors: ids.map((id, i) => ({ id, name: `Yard detector ${i}`, line: "yard", at: i / 100 })),
      nodes: [{ id: "yard-board", name: "Yard board", detectors: ids, signals: [] }],
    };
    const res = await engineer.put("/api/layouts/goods-yard").send(body);
    expect(res.status).toBe(400);
    const details = res.body.error.details as { path: string; message: string }[];
    expect(details[0]).toEqual({ path: "$.detectors", message: expect.stringMatching(/500/) });
    expect(details.length).toBeLessThanOrEqual(5);
    expect(details.map((d) => d.path)).toEqual(["$.detectors", "$.nodes[0].detectors"]);
    expect(details.some((d) => d.message.includes("unknown detector"))).toBe(false);
    expect((await engineer.get("/api/layouts/goods-yard")).body.layout.revision).toBe(before.revision);
  });

  it("lists at most 200 errors, the last saying how many more there are", async () => {
    const before = (await engineer.get("/api/layouts/goods-yard")).body.layout as LayoutDetail;
    // 500 references to detectors that do not exist: 500 errors of a sound shape.
    const missing = Array.from({ length: 500 }, (_, i) => `X${i}`);
    const body = { ...before, lines: [{ id: "yard", name: "Yard road" }], nodes: [{ id: "yard-board", name: "Yard board", detectors: missing, signals: [] }] };
    const res = await engineer.put("/api/layouts/goods-yard").send(body);
    expect(res.status).toBe(400);
    expect(res.body.error.message).toContain("500 error(s)");
    const details = res.body.error.details as { path: string; message: string }[];
    expect(details).toHaveLength(200);
    expect(details[0]).toEqual({ path: "$.nodes[0].detectors[0]", message: 'unknown detector "X0"' });
    expect(details[199]).toEqual({ path: "$", message: expect.stringContaining("… and 301 more errors") });
    expect(details.every((d) => d.path.startsWith("$"))).toBe(true);
  });

  it("archives a layout: it stops running live and refuses every edit with 409; restore brings it back", async () => {
    expect(live.runtime.runner("wrenfold-loop")).toBeDefined();
    const archived = await admin.post("/api/layouts/wrenfold-loop/archive");
    expect(archived.status).toBe(200);
    expect(archived.body).toMatchObject({ slug: "wrenfold-loop", archived: true });
    await waitFor(() => live.runtime.runner("wrenfold-loop") === undefined, "the archived layout to stop running");
    expect((await engineer.get("/api/layouts/wrenfold-loop/live")).status).toBe(404);

    const records = await recordsOf(engineer, "wrenfold-loop");
    const refused = [
      await engineer.put("/api/layouts/wrenfold-loop").send(records),
      await engineer.post("/api/layouts/wrenfold-loop/rulebooks").send({ rulebook: (await engineer.get("/api/layouts/wrenfold-loop/rulebooks/1")).body.version.rulebook }),
      await engineer.post("/api/layouts/wrenfold-loop/rulebooks/1/publish").send({ withoutProof: true, reason: "archived test" }),
      await engineer.post("/api/layouts/wrenfold-loop/nodes").send({ id: "spare", name: "Spare", detectors: [], signals: [] }),
    ];
    for (const res of refused) {
      expect(res.status).toBe(409);
      expect(res.body.error.code).toBe("archived");
    }
    // Nothing of it is deleted, and it is still listed, marked archived.
    expect((await engineer.get("/api/layouts/wrenfold-loop")).body.layout.archivedAt).toEqual(archived.body.archivedAt);
    const list = await engineer.get("/api/layouts");
    expect(list.body.layouts.find((l: { slug: string }) => l.slug === "wrenfold-loop")).toMatchObject({ archived: true });

    const restored = await admin.post("/api/layouts/wrenfold-loop/restore");
    expect(restored.body).toMatchObject({ archived: false, archivedAt: null });
    await waitFor(() => live.runtime.runner("wrenfold-loop") !== undefined, "the restored layout to run again");
    expect((await engineer.put("/api/layouts/wrenfold-loop").send(records)).status).toBe(200);

    const audit = await t.deps.db.models.AuditEntry.findAll({ where: { target: "wrenfold-loop" }, order: [["id", "ASC"]] });
    expect(audit.map((a) => a.action)).toEqual(["archive-layout", "restore-layout", "edit-layout"]);
  });
});
