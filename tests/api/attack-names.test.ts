/**
 * Attack pass, names: a name is shown on the mimic, the visitor display, the printed rulebook,
 * in mail and in CSV cells, so it is one line of visible text. Control characters (a tab, a
 * line break, an escape sequence) and direction overrides (U+202E shows "Main home" turned
 * around) are refused with their paths and change nothing; blank names too. Letters of every
 * script, accents and emoji are names like any other.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { DEMO_PASSWORD } from "../../server/db/seed/demo";
import type { LayoutDetail } from "@shared/contract/rest";
import { startTestApp, type TestApp } from "../support/testApp";

type Agent = Awaited<ReturnType<TestApp["signIn"]>>;

const SLUG = "fernmoor-yard";
const G_SCALE = { name: "G", ratio: 22.5 };

function yardRecords(revision: number, names: { layout?: string; line?: string; detectors?: string[]; signal?: string } = {}) {
  const detectorNames = names.detectors ?? ["Yard approach", "Yard entry"];
  return {
    format: "blocklight.layout/1",
    slug: SLUG,
    name: names.layout ?? "Fernmoor yard",
    scale: G_SCALE,
    lines: [{ id: "yard", name: names.line ?? "Yard road" }],
    detectors: detectorNames.map((name, i) => ({ id: `Y${i}`, name, line: "yard", at: 1 + i * 5 })),
    signals: [{ id: "Y1", name: names.signal ?? "Yard home", line: "yard", at: 6, aspects: ["danger", "clear"] }],
    points: [],
    nodes: [],
    revision,
  };
}

describe("names are one line of visible text", () => {
  let t: TestApp;
  let engineer: Agent;
  beforeAll(async () => {
    t = await startTestApp();
    engineer = await t.signIn("engineer");
    expect((await engineer.post("/api/layouts").send({ slug: SLUG, name: "Fernmoor yard", scale: G_SCALE })).status).toBe(201);
  });
  afterAll(async () => {
    await t.close();
  });

  const paths = (body: { error: { details?: { path: string; message: string }[] } }) => (body.error.details ?? []).map((d) => d.path);

  it("refuses records whose names hide characters, listing each with its path, and saves nothing", async () => {
    const res = await engineer.put(`/api/layouts/${SLUG}`).send(
      yardRecords(1, { layout: "Fernmoor\nyard", line: "Yard\troad", detectors: ["Yard \u202eapproach", "\u001b[31mYard entry"], signal: "   " }),
    );
    expect(res.status).toBe(400);
    expect(paths(res.body)).toEqual(expect.arrayContaining(["$.name", "$.lines[0].name", "$.detectors[0].name", "$.detectors[1].name", "$.signals[0].name"]));
    expect(res.body.error.details.find((d: { path: string }) => d.path === "$.detectors[0].name").message).toMatch(/direction overrides/);
    expect(res.body.error.details.find((d: { path: string }) => d.path === "$.signals[0].name").message).toMatch(/blank/);
    const now = (await engineer.get(`/api/layouts/${SLUG}`)).body.layout as LayoutDetail;
    expect(now).toMatchObject({ revision: 1, name: "Fernmoor yard", detectors: [] });
  });

  it("keeps names in any script, with accents and emoji, exactly as typed", async () => {
    const names = { layout: "Fernmoor Güterbahnhof 漢字", line: "Route de l’étang", detectors: ["Détecteur 🚂 approach", "Ωmega entry"], signal: "Señal de entrada" };
    const res = await engineer.put(`/api/layouts/${SLUG}`).send(yardRecords(1, names));
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    const layout = res.body.layout as LayoutDetail;
    expect([layout.name, layout.lines[0].name, ...layout.detectors.map((d) => d.name), layout.signals[0].name]).toEqual([names.layout, names.line, ...names.detectors, names.signal]);
  });

  it("refuses such a name for a new layout", async () => {
    const created = await engineer.post("/api/layouts").send({ slug: "fernmoor-shed", name: "Engine\u0007shed", scale: G_SCALE });
    expect(created.status).toBe(400);
    expect(paths(created.body)).toEqual(["$.name"]);
    expect((await engineer.get("/api/layouts/fernmoor-shed")).status).toBe(404);
  });

  it("refuses it for a member's own name and the society's name", async () => {
    const viewer = await t.signIn("viewer");
    const me = await viewer.patch("/api/me").send({ name: "Wren\r\nBcc: someone@fernmoor.example", currentPassword: DEMO_PASSWORD });
    expect(me.status).toBe(400);
    expect(paths(me.body)).toEqual(["$.name"]);
    expect((await viewer.get("/api/me")).body.user.name).not.toMatch(/Bcc/);

    const admin = await t.signIn("admin");
    const society = await admin.patch("/api/society").send({ name: "Fernmoor \u202eGRS" });
    expect(society.status).toBe(400);
    expect((await admin.get("/api/society")).body.name).not.toMatch(/\u202e/);
  });
});
