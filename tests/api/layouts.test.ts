import { QueryTypes } from "sequelize";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { kestrelBankLayout } from "@shared/demo/fernmoor";
import { startTestApp, type TestApp } from "../support/testApp";

type Agent = Awaited<ReturnType<TestApp["signIn"]>>;

/** Returns a copy of the demo layout with one thing broken. */
function broken(slug: string, mutate: (file: Record<string, any>) => void) {
  const file = structuredClone(kestrelBankLayout()) as Record<string, any>;
  file.slug = slug;
  mutate(file);
  return file;
}

const BROKEN_FILES: [string, Record<string, any>, string[]][] = [
  ["wrong format tag", broken("b1", (f) => (f.format = "blocklight.layout/9")), ["$.format"]],
  ["detector on an unknown line", broken("b2", (f) => (f.detectors[0].line = "nowhere")), ["$.detectors[0].line"]],
  ["duplicate detector id", broken("b3", (f) => f.detectors.push({ ...f.detectors[0] })), [`$.detectors[${kestrelBankLayout().detectors.length}].id`]],
  ["signal without danger", broken("b4", (f) => (f.signals[0].aspects = ["clear"])), ["$.signals[0].aspects"]],
  [
    "rule shows an aspect the signal cannot show",
    broken("b5", (f) => {
      f.signals[0].aspects = ["danger", "clear"];
      f.rulebook.rules[0].do.push({ show: f.signals[0].id, aspect: "caution" });
    }),
    ["$.rulebook.rules[0].do"],
  ],
  ["rule triggered by an unknown detector", broken("b6", (f) => (f.rulebook.rules[0].on = { pass: "ZZ" })), ["$.rulebook.rules[0].on.pass"]],
  ["negative position", broken("b7", (f) => (f.detectors[1].at = -3)), ["$.detectors[1].at"]],
];

describe("layout files", () => {
  let t: TestApp;
  let engineer: Agent;
  beforeAll(async () => {
    t = await startTestApp();
    engineer = await t.signIn("engineer");
  });
  afterAll(() => t.close());

  it.each(BROKEN_FILES)("refuses a file with %s, naming the JSON path, and stores nothing", async (_name, file, paths) => {
    const res = await engineer.post("/api/layouts/import").send(file);
    expect(res.status).toBe(400);
    const got: string[] = res.body.error.details.map((d: { path: string }) => d.path);
    for (const p of paths) expect(got.some((g) => g === p || g.startsWith(p)), `${p} in ${got.join(", ")}`).toBe(true);
    expect((await engineer.get(`/api/layouts/${file.slug}`)).status).toBe(404);
  });

  it("lists every error of a file with several mistakes", async () => {
    const file = broken("b9", (f) => {
      f.detectors[0].line = "nowhere";
      f.signals[0].aspects = ["clear"];
      f.name = "";
    });
    const res = await engineer.post("/api/layouts/import").send(file);
    expect(res.status).toBe(400);
    expect(res.body.error.details.length).toBeGreaterThanOrEqual(2);
  });

  it("imports, publishes version 1, and exports the same file back without node secrets", async () => {
    const file = { ...kestrelBankLayout(), slug: "round-trip" };
    expect((await engineer.post("/api/layouts/import").send(file)).status).toBe(201);
    const node = await engineer.post("/api/layouts/round-trip/nodes").send({ id: "spare-board", name: "Spare board", detectors: [], signals: [] });
    expect(node.status).toBe(201);
    expect(node.body.secret).toMatch(/^[A-Za-z0-9_-]{20,}$/);

    const exported = await engineer.get("/api/layouts/round-trip/export");
    expect(exported.status).toBe(200);
    const text = JSON.stringify(exported.body);
    expect(text).not.toContain(node.body.secret);
    expect(text).not.toMatch(/secret/i);
    // The export writes what a `/1` file leaves out: points hand-worked, boards reporting no points.
    const { nodes, ...rest } = exported.body;
    const { nodes: fileNodes, ...fileRest } = file;
    expect(rest).toEqual({ ...fileRest, points: file.points.map((p) => ({ ...p, worked: "hand" })) });
    expect(nodes.slice(0, fileNodes.length)).toEqual(fileNodes.map((n) => ({ ...n, points: [] })));
    expect(Object.keys(exported.body)).toEqual(["format", "slug", "name", "scale", "lines", "detectors", "signals", "points", "nodes", "schematic", "rulebook"]);

    const stored = await t.deps.db.sequelize.query<{ secret_hash: string }>(
      "SELECT secret_hash FROM nodes WHERE node_id = 'spare-board'",
      { type: QueryTypes.SELECT },
    );
    expect(stored[0].secret_hash).toMatch(/^sha256:[A-Za-z0-9_-]{43}$/); // a digest of the 192-bit secret (server/nodeSecret.ts)
    expect(stored[0].secret_hash).not.toContain(node.body.secret);

    const detail = await engineer.get("/api/layouts/round-trip");
    expect(detail.body.layout.versions).toEqual([expect.objectContaining({ version: 1, status: "published", live: true })]);
  });

  it("answers 409 when the slug exists", async () => {
    const res = await engineer.post("/api/layouts/import").send(kestrelBankLayout());
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe("conflict");
  });

  it("saves a draft as a new version, refuses a broken one with paths, and publishes", async () => {
    const rulebook = kestrelBankLayout().rulebook;
    const saved = await engineer.post("/api/layouts/kestrel-bank/rulebooks").send({ rulebook, note: "tidy" });
    expect(saved.status).toBe(201);
    const version = saved.body.version as number;
    expect(version).toBeGreaterThan(1);

    const bad = await engineer.post("/api/layouts/kestrel-bank/rulebooks").send({ rulebook: { ...rulebook, rules: [{ id: "x", on: { pass: "MA" }, do: [{ add: "nothing", by: 1 }] }] } });
    expect(bad.status).toBe(400);
    expect(bad.body.error.details[0].path).toMatch(/^\$\.rules\[0\]\.do\[0\]/);

    // Never proved: publishing needs an explicit "without proof" with a reason.
    expect((await engineer.post(`/api/layouts/kestrel-bank/rulebooks/${version}/publish`)).status).toBe(400);
    const published = await engineer.post(`/api/layouts/kestrel-bank/rulebooks/${version}/publish`).send({ withoutProof: true, reason: "same rules as version 1" });
    expect(published.status).toBe(200);
    const detail = await engineer.get("/api/layouts/kestrel-bank");
    expect(detail.body.layout.versions.find((v: { version: number }) => v.version === version)).toMatchObject({ status: "published", live: true });
  });

  it("refuses a node that names a detector another node already serves", async () => {
    const file = kestrelBankLayout();
    const served = file.nodes[0].detectors[0];
    const res = await engineer.post("/api/layouts/kestrel-bank/nodes").send({ id: "dup-board", name: "Dup", detectors: [served], signals: [] });
    expect(res.status).toBe(400);
    expect(res.body.error.details[0].path).toBe("$.detectors[0]");
  });
});
