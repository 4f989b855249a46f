/**
 * The prover models the points a layout really has: a stored version is proved with the
 * `worked` of the layout's points records, and `POST /api/prove` with the file's own. The
 * rulebook never throws P2, so only the layout can say whether a person may move it.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { ProofJobDto, ProofResultDto } from "@shared/contract/rest";
import { wrenfoldLoopLayout } from "@shared/demo/fernmoor";
import { closeProofJobs } from "../../server/features/prove/service";
import { unthrownPointsRulebook } from "../fixtures/unthrownPoints";
import { startTestApp, type TestApp } from "../support/testApp";

type Agent = Awaited<ReturnType<TestApp["signIn"]>>;

async function proveStored(agent: Agent, version: number): Promise<ProofJobDto> {
  const start = await agent.post(`/api/layouts/wrenfold-loop/rulebooks/${version}/proofs`);
  expect(start.status, JSON.stringify(start.body)).toBe(202);
  const deadline = Date.now() + 20_000;
  for (;;) {
    const job = (await agent.get(`/api/proofs/${start.body.jobId}`)).body.job as ProofJobDto;
    if (job.state !== "queued" && job.state !== "running") return job;
    if (Date.now() > deadline) throw new Error(`job still ${job.state}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

const verdicts = (result: ProofResultDto | null) => Object.fromEntries(result!.properties.map((p) => [p.id, p.holds]));

describe("points working passed to the prover", () => {
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

  it("proves a stored version with the layout's power points, and refutes it once the records say hand", async () => {
    const saved = await engineer.post("/api/layouts/wrenfold-loop/rulebooks").send({ rulebook: unthrownPointsRulebook(), note: "unthrown points" });
    expect(saved.status, JSON.stringify(saved.body)).toBe(201);

    const power = await proveStored(engineer, saved.body.version);
    expect(power.state).toBe("done");
    expect(power.result!.verdict).toBe("proved");

    const layout = await t.deps.db.models.Layout.findOne({ where: { slug: "wrenfold-loop" } });
    await t.deps.db.models.PointsRecord.update({ worked: "hand" }, { where: { layoutId: layout!.id, pointsId: "P2" } });
    const hand = await proveStored(engineer, saved.body.version);
    expect(hand.result!.verdict).toBe("refuted");
    expect(verdicts(hand.result)).toMatchObject({ "points-set-for-train": false, "points-locked": true });
    const counterexample = hand.result!.properties.find((p) => p.id === "points-set-for-train")!.counterexample!;
    // A person moved P2 off normal after W1 cleared: the train met it moving or reversed.
    expect(counterexample.some((m) => m.type === "points" && m.points === "P2")).toBe(true);
  });

  it.each([
    ["power", "proved"],
    ["hand", "refuted"],
  ] as const)("POST /api/prove takes P2 worked %s from the file: %s", async (worked, verdict) => {
    const file = { ...wrenfoldLoopLayout(), rulebook: unthrownPointsRulebook() };
    file.points = file.points.map((p) => ({ ...p, worked }));
    const res = await engineer.post("/api/prove").send(file);
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect((res.body as ProofResultDto).verdict).toBe(verdict);
  });
});
