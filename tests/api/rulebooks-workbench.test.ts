/**
 * Rulebooks on the workbench: junction templates over REST, the versions list with each
 * version's last verdict, publishing an unproved version only "without proof" with a reason
 * (audited), an alarm when the live version is later refuted, and canonical key order.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { AlarmDto } from "@shared/contract/live";
import type { TemplateDto } from "@shared/contract/layoutEdit";
import type { ProofJobDto, RulebookVersionSummary } from "@shared/contract/rest";
import { KESTREL_MAX_AXLES, KESTREL_MAX_TRAINS, kestrelBankLayout } from "@shared/demo/fernmoor";
import { RULEBOOK_KEY_ORDER } from "@shared/rulebook/canonical";
import { rulebookContextOf, validateRulebookFile } from "@shared/rulebook/validate";
import { closeProofJobs } from "../../server/features/prove/service";
import { startTestApp, type TestApp } from "../support/testApp";

type Agent = Awaited<ReturnType<TestApp["signIn"]>>;
const SLUG = "kestrel-bank";

async function saveDraft(agent: Agent, rulebook: unknown): Promise<number> {
  const res = await agent.post(`/api/layouts/${SLUG}/rulebooks`).send({ rulebook, note: "workbench test" });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  return res.body.version;
}

async function prove(agent: Agent, version: number): Promise<ProofJobDto> {
  const started = await agent.post(`/api/layouts/${SLUG}/rulebooks/${version}/proofs`);
  expect(started.status).toBe(202);
  const deadline = Date.now() + 30_000;
  for (;;) {
    const job = (await agent.get(`/api/proofs/${started.body.jobId}`)).body.job as ProofJobDto;
    if (job.state !== "queued" && job.state !== "running") return job;
    if (Date.now() > deadline) throw new Error(`proof of version ${version} still ${job.state}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

async function versionsOf(agent: Agent): Promise<RulebookVersionSummary[]> {
  return (await agent.get(`/api/layouts/${SLUG}`)).body.layout.versions;
}

describe("junction templates", () => {
  let t: TestApp;
  let engineer: Agent;
  beforeAll(async () => {
    t = await startTestApp();
    engineer = await t.signIn("engineer");
  });
  afterAll(() => t.close());

  it("lists each template with its options as JSON Schema and an example", async () => {
    const res = await engineer.get("/api/templates");
    expect(res.status).toBe(200);
    const templates = res.body.templates as TemplateDto[];
    expect(templates.map((x) => x.id)).toEqual(["converging-junction", "facing-junction"]);
    for (const template of templates) {
      expect(template.optionsSchema).toMatchObject({ type: "object", properties: expect.any(Object) });
      expect(Object.keys(template.example).every((key) => key in (template.optionsSchema.properties as object))).toBe(true);
    }
    const converging = templates[0].optionsSchema as { properties: { order: { enum: string[] } } };
    expect(converging.properties.order.enum).toEqual(["priority", "first-come"]);
  });

  it.each(["converging-junction", "facing-junction"])("generates a valid rulebook from the %s example, in canonical order, saving nothing", async (id) => {
    const template = ((await engineer.get("/api/templates")).body.templates as TemplateDto[]).find((x) => x.id === id)!;
    const before = await t.deps.db.models.RulebookVersion.count();
    const res = await engineer.post(`/api/templates/${id}`).send({ options: template.example });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(Object.keys(res.body.rulebook)).toEqual(RULEBOOK_KEY_ORDER.filter((key) => key in res.body.rulebook));
    for (const rule of res.body.rulebook.rules) expect(Object.keys(rule)[0]).toBe("id");
    expect(validateRulebookFile(res.body.rulebook).ok).toBe(true);
    expect(await t.deps.db.models.RulebookVersion.count()).toBe(before);
  });

  it("generates the demo junction's rulebook from the demo's options", async () => {
    const res = await engineer.post("/api/templates/converging-junction").send({
      options: {
        routes: [
          { id: "main", signal: "M1", approach: ["MA"], entry: "ME", exit: ["JX"] },
          { id: "branch", signal: "B1", approach: ["BA"], entry: "BE", exit: ["JX"] },
          { id: "shed", signal: "S1", approach: ["SA"], entry: "SE", exit: ["JX"] },
        ],
        order: "priority",
        priority: "main",
        maxAxles: KESTREL_MAX_AXLES,
        maxTrainsPerRoute: KESTREL_MAX_TRAINS,
      },
    });
    expect(res.status).toBe(200);
    expect(res.body.rulebook).toEqual(JSON.parse(JSON.stringify(kestrelBankLayout().rulebook)));
    expect(validateRulebookFile(res.body.rulebook, rulebookContextOf(kestrelBankLayout())).ok).toBe(true);
  });

  it("refuses bad options with every error and its path, and an unknown template with 404", async () => {
    const res = await engineer.post("/api/templates/converging-junction").send({
      options: {
        routes: [
          { id: "main", signal: "M1", approach: ["MA"], entry: "ME", exit: ["JX"] },
          { id: "none", signal: "M1", approach: [], entry: "BE", exit: ["JX"] },
        ],
        order: "priority",
        priority: "quarry",
      },
    });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe("invalid_options");
    expect(res.body.error.details.map((d: { path: string }) => d.path)).toEqual(
      expect.arrayContaining(["$.options.routes[1].id", "$.options.routes[1].approach", "$.options.routes[1].signal", "$.options.priority"]),
    );
    expect((await engineer.post("/api/templates/facing-junction").send({ options: { choose: "points" } })).status).toBe(400);
    expect((await engineer.post("/api/templates/no-such-junction").send({ options: {} })).status).toBe(404);
  });
});

describe("publishing and proof verdicts", () => {
  let t: TestApp;
  let engineer: Agent;
  beforeAll(async () => {
    t = await startTestApp();
    engineer = await t.signIn("engineer");
  });
  afterAll(async () => {
    await closeProofJobs(t.deps);
    await t.close();
  });

  it("refuses to publish an unproved version unless asked to publish without proof, with a reason that is audited", async () => {
    const version = await saveDraft(engineer, kestrelBankLayout().rulebook);
    const plain = await engineer.post(`/api/layouts/${SLUG}/rulebooks/${version}/publish`);
    expect(plain.status).toBe(400);
    expect(plain.body.error.code).toBe("unproved");
    expect(plain.body.error.message).toMatch(/never been proved/);
    const noReason = await engineer.post(`/api/layouts/${SLUG}/rulebooks/${version}/publish`).send({ withoutProof: true });
    expect(noReason.status).toBe(400);
    expect(noReason.body.error.details).toEqual([expect.objectContaining({ path: "$.reason" })]);
    expect((await versionsOf(engineer)).find((v) => v.version === version)).toMatchObject({ status: "draft", live: false, verdict: null });

    const ok = await engineer.post(`/api/layouts/${SLUG}/rulebooks/${version}/publish`).send({ withoutProof: true, reason: "commissioning run under the society's rules" });
    expect(ok.status).toBe(200);
    const audit = await t.deps.db.models.AuditEntry.findOne({ where: { action: "publish-rulebook-without-proof", target: `version ${version}` } });
    expect(audit?.reason).toBe("commissioning run under the society's rules");
    expect((await versionsOf(engineer)).find((v) => v.version === version)).toMatchObject({ status: "published", live: true });
  });

  it("shows each version's last verdict, and publishes a proved version without more ado", async () => {
    const version = await saveDraft(engineer, kestrelBankLayout().rulebook);
    const job = await prove(engineer, version);
    expect(job.result?.verdict).toBe("proved");
    const listed = (await versionsOf(engineer)).find((v) => v.version === version)!;
    expect(listed).toMatchObject({ status: "proved", verdict: "proved" });
    expect(Date.parse(listed.provedAt!)).not.toBeNaN();
    expect((await engineer.post(`/api/layouts/${SLUG}/rulebooks/${version}/publish`)).status).toBe(200);
    const audit = await t.deps.db.models.AuditEntry.findOne({ where: { action: "publish-rulebook", target: `version ${version}` } });
    expect(audit).not.toBeNull();
  });

  it("marks a published version that is later refuted, and raises an alarm when it is the live one", async () => {
    const rulebook = structuredClone(kestrelBankLayout().rulebook);
    // The mistake: the main approach also clears the branch signal (two conflicting proceeds).
    rulebook.rules.find((r) => r.id === "main-approach")!.do.push({ show: "B1", aspect: "clear" });
    // Short trains find the mistake as surely and keep the proof quick.
    rulebook.proving = { ...rulebook.proving!, maxAxles: 2, maxTrainsPerRoute: 2 };
    const version = await saveDraft(engineer, rulebook);
    await engineer.post(`/api/layouts/${SLUG}/rulebooks/${version}/publish`).send({ withoutProof: true, reason: "trying it on the test track" });
    const job = await prove(engineer, version);
    expect(job.result?.verdict).toBe("refuted");
    expect((await versionsOf(engineer)).find((v) => v.version === version)).toMatchObject({ status: "published", live: true, verdict: "refuted" });

    const alarms = (await engineer.get(`/api/layouts/${SLUG}/alarms?state=all`)).body.alarms as AlarmDto[];
    const alarm = alarms.find((a) => a.kind === "rulebook" && a.subject === `version ${version}`);
    expect(alarm?.message).toMatch(/live rulebook \(version \d+\) was refuted: .*no-conflicting-proceeds/);

    // Publishing it again now needs "without proof": its last proof refuted it.
    const again = await engineer.post(`/api/layouts/${SLUG}/rulebooks/${version}/publish`);
    expect(again.status).toBe(400);
    expect(again.body.error.message).toMatch(/was refuted/);
  });

  it("stores and returns rulebooks in canonical key order", async () => {
    const scrambled: Record<string, unknown> = Object.fromEntries(Object.entries(kestrelBankLayout().rulebook).reverse());
    scrambled.rules = (scrambled.rules as object[]).map((rule) => Object.fromEntries(Object.entries(rule).reverse()));
    // Longest name first: jsonb would put the shortest first.
    const counterNames = Object.keys(kestrelBankLayout().rulebook.counters).sort((a, b) => b.length - a.length);
    scrambled.counters = Object.fromEntries(counterNames.map((name) => [name, 0]));
    const version = await saveDraft(engineer, scrambled);
    const read = (await engineer.get(`/api/layouts/${SLUG}/rulebooks/${version}`)).body.version.rulebook;
    expect(Object.keys(read)).toEqual([...RULEBOOK_KEY_ORDER]);
    expect(Object.keys(read.rules[1])).toEqual(["id", "note", "on", "do"]);
    // The author's order of declared names is kept, not re-sorted by the database.
    expect(Object.keys(read.counters)).toEqual(counterNames);
    const exported = (await engineer.get(`/api/layouts/${SLUG}/export`)).body;
    expect(Object.keys(exported.rulebook)).toEqual([...RULEBOOK_KEY_ORDER]);
  });
});
