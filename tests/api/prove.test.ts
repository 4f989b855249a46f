/**
 * Proving over REST and socket.io: `POST /api/prove` on a layout file, and proof jobs of
 * stored versions that run in worker threads, report progress, can be cancelled, and store
 * their result on the version (draft → proved only when every property holds).
 * State spaces are kept small where the test allows (the demo junction, 8 axles × 3 trains a
 * route, proves in about 675,000 states).
 */
import http from "node:http";
import type { AddressInfo } from "node:net";
import request from "supertest";
import { io as ioClient, type Socket } from "socket.io-client";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Ack, ClientToServerEvents, ServerToClientEvents } from "@shared/contract/live";
import type { ProofJobDto, ProofResultDto, StoredProofDto } from "@shared/contract/rest";
import { kestrelBankLayout } from "@shared/demo/fernmoor";
import { replayCounterexample, type Move } from "@shared/rulebook/prove";
import type { Rulebook } from "@shared/rulebook/schema";
import type { LayoutFile } from "@shared/layout/schema";
import { attachLiveSocket } from "../../server/features/live/socket";
import { closeProofJobs } from "../../server/features/prove/service";
import { attachProofSocket } from "../../server/features/prove/socket";
import { startTestApp, type TestApp } from "../support/testApp";

type Agent = Awaited<ReturnType<TestApp["signIn"]>>;
// Files broken on purpose are edited loosely, as a person editing JSON would.
// eslint-disable-next-line @typescript-eslint/no-explicit-any -- deliberately malformed files
type LooseFile = Record<string, any>;

/**
 * The mistake: the main approach rule also clears the branch signal, so a main train on
 * approach gets both home signals cleared at once.
 */
function brokenKestrelBank(): LayoutFile {
  const file = structuredClone(kestrelBankLayout());
  const rule = file.rulebook.rules.find((r) => r.id === "main-approach")!;
  rule.do.push({ show: "B1", aspect: "clear" });
  // Short trains: the mistake shows with two axles, and the broken rulebook's space is larger.
  file.rulebook.proving = { ...file.rulebook.proving!, maxAxles: 2, maxTrainsPerRoute: 2 };
  return file;
}

/** The demo rulebook with a state space big enough to be still running when cancelled. */
function slowRulebook(): Rulebook {
  const rulebook = structuredClone(kestrelBankLayout().rulebook);
  // About 2,000,000 states (some seconds): cancelled after its first progress report.
  rulebook.proving = { ...rulebook.proving!, maxAxles: 8, maxTrainsPerRoute: 4 };
  return rulebook;
}

/** Longest wait for a job that proves the full demo: the pool's own limit, and some. */
const PROOF_WAIT_MS = 90_000;

async function waitForJob(agent: Agent, jobId: string, until: (job: ProofJobDto) => boolean, timeoutMs = 20_000): Promise<ProofJobDto> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const res = await agent.get(`/api/proofs/${jobId}`);
    expect(res.status).toBe(200);
    if (until(res.body.job)) return res.body.job;
    if (Date.now() > deadline) throw new Error(`job ${jobId} still ${res.body.job.state}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}
const hasEnded = (job: ProofJobDto) => job.state !== "queued" && job.state !== "running";

async function saveDraft(agent: Agent, rulebook: unknown): Promise<number> {
  const res = await agent.post("/api/layouts/kestrel-bank/rulebooks").send({ rulebook, note: "proof test" });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  return res.body.version;
}

describe("POST /api/prove", () => {
  let t: TestApp;
  let viewer: Agent;
  beforeAll(async () => {
    t = await startTestApp();
    viewer = await t.signIn("viewer");
  });
  afterAll(async () => {
    await closeProofJobs(t.deps);
    await t.close();
  });

  it("proves the Kestrel Bank demo layout: every property holds", async () => {
    const res = await viewer.post("/api/prove").send(kestrelBankLayout());
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    const body = res.body as ProofResultDto;
    expect(body.verdict).toBe("proved");
    expect(body.properties.map((p) => p.id)).toEqual([
      "settles",
      "no-underflow",
      "no-conflicting-proceeds",
      "one-train-per-section",
      "no-stuck-train",
      "priority-unhindered",
    ]);
    expect(body.properties.every((p) => p.holds === true && p.counterexample === undefined)).toBe(true);
    expect(body.stats.states).toBeGreaterThan(0);
    expect(typeof body.stats.ms).toBe("number");
  }, PROOF_WAIT_MS);

  it("refutes a copy whose approach rule clears both home signals, with a replayable counterexample", async () => {
    const file = brokenKestrelBank();
    const res = await viewer.post("/api/prove").send(file);
    expect(res.status).toBe(200);
    const body = res.body as ProofResultDto;
    expect(body.verdict).toBe("refuted");
    const broken = body.properties.find((p) => p.id === "no-conflicting-proceeds")!;
    expect(broken.holds).toBe(false);
    const moves = broken.counterexample as Move[];
    expect(moves.length).toBeGreaterThan(0);
    expect(moves[0]).toMatchObject({ type: "arrive", route: "main" });
    // The trace, replayed through the engine, really ends with both signals cleared.
    const replay = replayCounterexample(file.rulebook, moves);
    const last = replay.steps[replay.steps.length - 1];
    expect(last.violates).toContain("no-conflicting-proceeds");
    expect(last.shown.M1).not.toBe("danger");
    expect(last.shown.B1).not.toBe("danger");
  });

  it.each([
    ["a rule triggered by an unknown detector", (f: LooseFile) => (f.rulebook.rules[0].on = { pass: "ZZ" }), "$.rulebook.rules[0].on.pass"],
    ["a wrong format tag", (f: LooseFile) => (f.format = "blocklight.layout/9"), "$.format"],
  ])("answers 400 with the JSON paths for a file with %s", async (_name, mutate, path) => {
    const file = structuredClone(kestrelBankLayout()) as LooseFile;
    mutate(file);
    const res = await viewer.post("/api/prove").send(file);
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe("invalid_layout");
    const paths: string[] = res.body.error.details.map((d: { path: string }) => d.path);
    expect(paths.some((p) => p.startsWith(path)), paths.join(", ")).toBe(true);
  });
});

describe("proof jobs of stored versions", () => {
  let t: TestApp;
  let engineer: Agent;
  let viewer: Agent;
  let server: http.Server;
  let url: string;
  let sockets: { close(): Promise<void> };
  let proofSockets: { close(): void };
  let cookie: string;

  beforeAll(async () => {
    t = await startTestApp();
    engineer = await t.signIn("engineer");
    viewer = await t.signIn("viewer");
    server = http.createServer(t.app);
    await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
    url = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
    const live = attachLiveSocket(server, t.deps);
    sockets = live;
    proofSockets = attachProofSocket(live.io, t.deps);
    const login = await request(t.app).post("/api/auth/login").send({ email: "engineer@fernmoor.example", password: "blocklight-demo" });
    cookie = (login.headers["set-cookie"] as unknown as string[]).map((c) => c.split(";")[0]).join("; ");
  });
  afterAll(async () => {
    proofSockets.close();
    await closeProofJobs(t.deps);
    await sockets.close();
    server.closeAllConnections();
    await new Promise<void>((resolve) => server.close(() => resolve()));
    await t.close();
  });

  it("proves a draft to completion: the version becomes proved and keeps the proof", async () => {
    const rulebook = structuredClone(kestrelBankLayout().rulebook);
    // Short trains keep the job quick on a loaded machine; the full demo is proved above.
    rulebook.proving = { ...rulebook.proving!, maxAxles: 2, maxTrainsPerRoute: 2 };
    const version = await saveDraft(engineer, rulebook);
    const start = await engineer.post(`/api/layouts/kestrel-bank/rulebooks/${version}/proofs`);
    expect(start.status).toBe(202);
    const job = await waitForJob(viewer, start.body.jobId, hasEnded);
    expect(job).toMatchObject({ state: "done", slug: "kestrel-bank", version, status: "proved" });
    expect(job.result!.verdict).toBe("proved");

    const stored = await viewer.get(`/api/layouts/kestrel-bank/rulebooks/${version}`);
    expect(stored.body.version.status).toBe("proved");
    const proof = stored.body.version.proof as StoredProofDto;
    expect(proof.verdict).toBe("proved");
    expect(proof.by).toBeTruthy();
    expect(proof.properties.every((p) => p.holds === true)).toBe(true);
  });

  it("keeps a refuted draft as draft and stores the counterexample", async () => {
    const version = await saveDraft(engineer, brokenKestrelBank().rulebook);
    const start = await engineer.post(`/api/layouts/kestrel-bank/rulebooks/${version}/proofs`);
    const job = await waitForJob(viewer, start.body.jobId, hasEnded);
    expect(job).toMatchObject({ state: "done", status: "draft" });
    const stored = await viewer.get(`/api/layouts/kestrel-bank/rulebooks/${version}`);
    expect(stored.body.version.status).toBe("draft");
    const proof = stored.body.version.proof as StoredProofDto;
    expect(proof.verdict).toBe("refuted");
    expect(proof.properties.find((p) => p.id === "no-conflicting-proceeds")!.counterexample!.length).toBeGreaterThan(0);
  });

  it("never changes a published version's status", async () => {
    const start = await engineer.post("/api/layouts/kestrel-bank/rulebooks/1/proofs");
    // The published demo (8 axles × 2 trains a route): allow for the proof's own time limit.
    const job = await waitForJob(viewer, start.body.jobId, hasEnded, PROOF_WAIT_MS);
    expect(job).toMatchObject({ state: "done", status: "published" });
    expect((await viewer.get("/api/layouts/kestrel-bank/rulebooks/1")).body.version.status).toBe("published");
  }, PROOF_WAIT_MS + 10_000);

  it("cancels a running job: the worker stops, the verdict is unfinished and nothing is stored", async () => {
    const version = await saveDraft(engineer, slowRulebook());
    const start = await engineer.post(`/api/layouts/kestrel-bank/rulebooks/${version}/proofs`);
    expect(start.status).toBe(202);
    expect((await engineer.get("/api/layouts/kestrel-bank/proofs")).body.jobs.map((j: ProofJobDto) => j.jobId)).toContain(start.body.jobId);
    await waitForJob(engineer, start.body.jobId, (job) => (job.progress?.states ?? 0) > 0);
    const cancelled = await engineer.delete(`/api/proofs/${start.body.jobId}`);
    expect(cancelled.status).toBe(200);
    expect(cancelled.body.job.state).toBe("cancelled");
    expect(cancelled.body.job.result.verdict).toBe("unfinished");
    expect(cancelled.body.job.result.properties.every((p: { holds: unknown }) => p.holds === null)).toBe(true);
    expect((await engineer.get("/api/layouts/kestrel-bank/proofs")).body.jobs).toEqual([]);
    const stored = await viewer.get(`/api/layouts/kestrel-bank/rulebooks/${version}`);
    expect(stored.body.version).toMatchObject({ status: "draft", proof: null });
    // Cancelling again answers with the ended job.
    expect((await engineer.delete(`/api/proofs/${start.body.jobId}`)).body.job.state).toBe("cancelled");
  });

  it("pushes progress and the end of a job to a watching socket", async () => {
    const rulebook = structuredClone(kestrelBankLayout().rulebook);
    // About 440,000 states: long enough for several progress pushes.
    rulebook.proving = { ...rulebook.proving!, maxAxles: 6, maxTrainsPerRoute: 4 };
    const version = await saveDraft(engineer, rulebook);
    const socket: Socket<ServerToClientEvents, ClientToServerEvents> = ioClient(url, {
      transports: ["websocket"],
      extraHeaders: { cookie },
      reconnection: false,
    });
    try {
      await new Promise<void>((resolve, reject) => {
        socket.once("connect", () => resolve());
        socket.once("connect_error", reject);
      });
      const progress: number[] = [];
      socket.on("proof:progress", (u) => progress.push(u.progress.states));
      const done = new Promise<ProofJobDto>((resolve) => socket.on("proof:done", resolve));
      const start = await engineer.post(`/api/layouts/kestrel-bank/rulebooks/${version}/proofs`);
      const reply = await new Promise<Ack<ProofJobDto>>((resolve) => socket.emit("proof:watch", { jobId: start.body.jobId }, resolve));
      expect(reply.ok).toBe(true);
      const job = await done;
      expect(job).toMatchObject({ jobId: start.body.jobId, state: "done", status: "proved" });
      expect(progress.length).toBeGreaterThan(0);
      expect(progress).toEqual([...progress].sort((a, b) => a - b));
    } finally {
      socket.disconnect();
    }
  });

  it("refuses to watch a job for a socket that is not signed in", async () => {
    const socket: Socket<ServerToClientEvents, ClientToServerEvents> = ioClient(url, { transports: ["websocket"], reconnection: false });
    try {
      await new Promise<void>((resolve) => socket.once("connect", () => resolve()));
      const reply = await new Promise<Ack<ProofJobDto>>((resolve) => socket.emit("proof:watch", { jobId: "00000000-0000-4000-8000-000000000000" }, resolve));
      expect(reply).toMatchObject({ ok: false, error: { code: "unauthenticated" } });
    } finally {
      socket.disconnect();
    }
  });

  it("answers 404 for an unknown job and an unknown version", async () => {
    expect((await viewer.get("/api/proofs/00000000-0000-4000-8000-000000000000")).status).toBe(404);
    expect((await engineer.post("/api/layouts/kestrel-bank/rulebooks/999/proofs")).status).toBe(404);
  });
});
