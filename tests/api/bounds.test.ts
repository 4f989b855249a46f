/**
 * Issue 10: no request can starve the live pipeline, and every body and query is bounded:
 * a clear 400/413 with the path instead of a 500 or a blocked main thread.
 */
import http from "node:http";
import type { AddressInfo } from "node:net";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { kestrelBankLayout } from "@shared/demo/fernmoor";
import { DEMO_PASSWORD, demoEmail } from "../../server/db/seed/demo";
import { MAX_EVENTS, MAX_OUTPUT_CELLS } from "../../server/features/simulate/simulation";
import { SimulationRunner } from "../../server/features/simulate/runner";
import { startTestApp, type TestApp } from "../support/testApp";

const SLUG = "kestrel-bank";
type Agent = Awaited<ReturnType<TestApp["signIn"]>>;

/** A condition `{"not":{"not":…{"latch":"shuntLock"}}}` nested `depth` deep. */
function deepCondition(depth: number): unknown {
  let condition: unknown = { latch: "shuntLock" };
  for (let i = 0; i < depth; i++) condition = { not: condition };
  return condition;
}

/** The demo junction's state is 10 values a step (three routes): the most inputs its simulation may have. */
const LARGEST_KESTREL = Math.floor(MAX_OUTPUT_CELLS / 10);
const pulses = (n: number) => Array.from({ length: n }, (_, i) => ({ type: "pulse", detector: i % 2 ? "ME" : "MA", at: i * 1000 }));

describe("bounded requests", () => {
  let t: TestApp;
  let viewer: Agent;
  let engineer: Agent;
  let maintainer: Agent;

  beforeAll(async () => {
    t = await startTestApp();
    [viewer, engineer, maintainer] = await Promise.all([t.signIn("viewer"), t.signIn("engineer"), t.signIn("maintainer")]);
  });
  afterAll(() => t.close());

  describe("nesting depth", () => {
    it("a layout whose rulebook is nested 2,000 deep is refused with 400 and the path", async () => {
      const file = kestrelBankLayout();
      file.slug = "deep-bank";
      (file.rulebook.rules[0] as { if?: unknown }).if = deepCondition(2_000);
      const res = await engineer.post("/api/layouts/import").send(file);
      expect(res.status).toBe(400);
      expect(res.body.error.code).toBe("too_deep");
      expect(res.body.error.details[0].path).toMatch(/^\$\.rulebook\.rules\[0\]\.if(\.not)+$/);
    });

    it("the same in a simulation", async () => {
      const file = kestrelBankLayout();
      (file.rulebook.rules[0] as { if?: unknown }).if = deepCondition(2_000);
      const res = await viewer.post("/api/simulate").send({ layout: file, events: [] });
      expect(res.status).toBe(400);
      expect(res.body.error.details[0].path).toMatch(/^\$\.layout\.rulebook\.rules\[0\]\.if(\.not)+$/);
    });
  });

  describe("integer ranges and text", () => {
    it.each(["9999999999999999999", "9223372036854775808"])("a session events filter after=%s (past bigint) is a 400 with the path", async (after) => {
      const res = await viewer.get(`/api/sessions/1/events?format=json&after=${after}`);
      expect(res.status).toBe(400);
      expect(res.body.error.details).toContainEqual(expect.objectContaining({ path: "$.after" }));
    });

    it("the largest bigint is a valid filter", async () => {
      const res = await viewer.get(`/api/sessions/1/events?format=json&after=9223372036854775807`);
      expect(res.status).not.toBe(400);
      expect(res.status).not.toBe(500);
    });

    it("an imported line with a NUL is a 400 naming the line and field; nothing is stored", async () => {
      const line = JSON.stringify({ kind: "message", status: "rejected", reason: "bad\u0000byte", receivedAt: "2026-05-02T10:15:03.120Z" });
      const before = (await t.deps.db.sequelize.query(`SELECT count(*)::int AS n FROM sessions`, { plain: true })) as { n: number };
      const res = await maintainer.post(`/api/layouts/${SLUG}/sessions/import`).attach("file", Buffer.from(line + "\n"), "log.jsonl");
      expect(res.status).toBe(400);
      expect(res.body.error.details).toContainEqual({ path: "line 1: reason", message: expect.stringMatching(/NUL/) });
      const after = (await t.deps.db.sequelize.query(`SELECT count(*)::int AS n FROM sessions`, { plain: true })) as { n: number };
      expect(after.n).toBe(before.n);
    });
  });

  describe("POST /api/simulate", () => {
    it("runs a simulation and returns every step", async () => {
      const res = await viewer.post("/api/simulate").send({ layout: kestrelBankLayout(), events: pulses(2) });
      expect(res.status).toBe(200);
      expect(res.body.steps).toHaveLength(2);
      expect(res.body.steps[1].shown).toHaveProperty("M1");
    });

    it("more inputs than allowed is a 413 on $.events", async () => {
      const res = await viewer.post("/api/simulate").send({ layout: kestrelBankLayout(), events: Array(MAX_EVENTS + 1).fill({ type: "tick", at: 0 }) });
      expect(res.status).toBe(413);
      expect(res.body.error.details).toContainEqual(expect.objectContaining({ path: "$.events" }));
    });

    it("a rulebook declaring 300 counters is a 413 on its counters", async () => {
      const file = kestrelBankLayout();
      file.rulebook.counters = Object.fromEntries(Array.from({ length: 300 }, (_, i) => [`c${i}`, 0]));
      const res = await viewer.post("/api/simulate").send({ layout: file, events: pulses(10) });
      expect(res.status).toBe(413);
      expect(res.body.error.details).toContainEqual(expect.objectContaining({ path: "$.layout.rulebook.counters" }));
    });

    it("a reply that would be too large (inputs × state) is a 413 saying how many inputs fit", async () => {
      const file = kestrelBankLayout();
      file.rulebook.counters = { ...file.rulebook.counters, ...Object.fromEntries(Array.from({ length: 200 }, (_, i) => [`c${i}`, 0])) };
      const n = Math.ceil(MAX_OUTPUT_CELLS / 200);
      const res = await viewer.post("/api/simulate").send({ layout: file, events: pulses(n) });
      expect(res.status).toBe(413);
      expect(res.body.error.details[0]).toMatchObject({ path: "$.events", message: expect.stringMatching(/^at most \d+ inputs/) });
    });

    it("a bad input is a 400 with its path under $.events", async () => {
      const res = await viewer.post("/api/simulate").send({ layout: kestrelBankLayout(), events: [...pulses(3), { type: "pulse", detector: "no such!", at: 1 }] });
      expect(res.status).toBe(400);
      expect(res.body.error.details).toContainEqual(expect.objectContaining({ path: "$.events[3].detector" }));
    });

    it("runs off the main thread: a request sent during a large simulation is answered before it", async () => {
      const server = http.createServer(t.app);
      await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
      try {
        const { port } = server.address() as AddressInfo;
        const login = await request(t.app).post("/api/auth/login").send({ email: demoEmail("viewer"), password: DEMO_PASSWORD });
        const cookie = (login.headers["set-cookie"] as unknown as string[]).map((c) => c.split(";")[0]).join("; ");
        const body = Buffer.from(JSON.stringify({ layout: kestrelBankLayout(), events: pulses(LARGEST_KESTREL) }));
        // The moment the server has the whole body, and its reply: a main-thread simulation
        // would answer nothing else between the two.
        let received!: () => void;
        const bodyReceived = new Promise<void>((resolve) => (received = resolve));
        let simulateReply: http.ServerResponse | undefined;
        // Prepended, so this runs before the app rewrites the URL and before its body parser.
        server.prependListener("request", (req: http.IncomingMessage, res: http.ServerResponse) => {
          if (req.url !== "/api/simulate") return;
          simulateReply = res;
          req.prependOnceListener("end", received);
        });
        const simulation = new Promise<number>((resolve, reject) => {
          const req = http.request({ port, method: "POST", path: "/api/simulate", headers: { cookie, "content-type": "application/json", "content-length": body.length } }, (res) => {
            res.resume();
            res.on("end", () => resolve(res.statusCode ?? 0));
          });
          req.on("error", reject);
          req.end(body);
        });
        await bodyReceived;
        await new Promise((resolve) => setTimeout(resolve, 20));
        await request(server).get("/api/health");
        const answeredDuringSimulation = simulateReply?.headersSent === false;
        expect(await simulation).toBe(200);
        expect(answeredDuringSimulation).toBe(true);
      } finally {
        server.closeAllConnections();
        await new Promise((resolve) => server.close(resolve));
      }
    });

    it("a simulation that runs past its time is stopped with 503, and the next one runs in a fresh worker", async () => {
      const runner = new SimulationRunner();
      const small = Buffer.from(JSON.stringify({ layout: kestrelBankLayout(), events: pulses(1) }));
      try {
        expect((await runner.run(small)).status).toBe(200);
        const large = Buffer.from(JSON.stringify({ layout: kestrelBankLayout(), events: pulses(LARGEST_KESTREL) }));
        await expect(runner.run(large, { maxMs: 20 })).rejects.toMatchObject({ status: 503, code: "simulation_timeout" });
        expect((await runner.run(small)).status).toBe(200);
      } finally {
        await runner.close();
      }
    });
  });
});
