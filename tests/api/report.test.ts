/**
 * The running-day report against a scripted day on Kestrel Bank whose waits, priority checks,
 * axle counts and board outages are known in advance. The day is uploaded as an event log
 * (the real import route, stored in the real database), so every time in it is exact.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { SessionReportDto } from "@shared/contract/report";
import { startTestApp, type TestApp } from "../support/testApp";

const SLUG = "kestrel-bank";
const T0 = Date.parse("2026-05-02T09:00:00.000Z");
const at = (s: number) => new Date(T0 + s * 1000).toISOString();

type Line = Record<string, unknown>;
const seqs: Record<string, number> = {};
const node = (detector: string) => (detector === "MA" ? "bank-foot" : detector === "BA" || detector === "BE" ? "quarry" : "junction");
const pulse = (s: number, detector: string, status = "accepted"): Line => {
  const n = node(detector);
  if (status === "accepted") seqs[n] = (seqs[n] ?? 0) + 1;
  return { kind: "pulse", status, node: n, boot: "b1", seq: seqs[n] ?? 1, detector, receivedAt: at(s) };
};
/** A two-axle train's axles half a second apart. */
const axles = (s: number, detector: string, count = 2) => Array.from({ length: count }, (_, i) => pulse(s + i * 0.5, detector));
const status = (s: number, n: string, online: boolean): Line => ({ kind: "status", status: "accepted", node: n, receivedAt: at(s), input: { online } });

/** The day, in the order the runner would have applied it (see the expectations below). */
const DAY: Line[] = [
  status(0, "bank-foot", true),
  status(0, "junction", true),
  status(5, "quarry", true),
  // Train 1, main: finds M1 off (no wait).
  ...axles(10, "MA"),
  { ...pulse(10.6, "MA", "duplicate"), seq: 2 },
  ...axles(20, "ME"),
  ...axles(25, "JX"),
  // Train 2, branch: finds B1 off.
  ...axles(60, "BA"),
  ...axles(70, "BE"),
  ...axles(76, "JX"),
  // Train 3, branch, is in the junction when train 4, main, arrives: train 4 waits 112 → 130.5 s
  // (M1 clears on train 3's last axle at JX). A wait, but no priority check: the junction was busy.
  ...axles(100, "BA"),
  ...axles(108, "BE"),
  ...axles(112, "MA"),
  ...axles(130, "JX"),
  ...axles(135, "ME"),
  ...axles(140, "JX"),
  // The quarry board drops out for 30 s.
  status(150, "quarry", false),
  status(180, "quarry", true),
  // A stray pulse at ME leaves junction = 1: train 5, main, meets danger on a free junction at
  // 210 s until the signaller zeroes the counter at 240 s — one priority check of 30 s.
  pulse(200, "ME"),
  ...axles(210, "MA"),
  { kind: "command", status: "accepted", receivedAt: at(240), input: { type: "command", at: T0 + 240_000, command: "zero", counter: "junction", by: "Test signaller", reason: "stray pulse at ME" } },
  ...axles(245, "ME"),
  ...axles(250, "JX"),
  // Train 6, branch: two axles at BA, only one at BE (a mismatch at BE), two at JX.
  ...axles(300, "BA"),
  pulse(310, "BE"),
  ...axles(320, "JX"),
];

describe("running-day report", () => {
  let t: TestApp;
  let report: SessionReportDto;
  let sessionId = 0;

  beforeAll(async () => {
    t = await startTestApp();
    const maintainer = await t.signIn("maintainer");
    const jsonl = DAY.map((line) => JSON.stringify(line)).join("\n") + "\n";
    const res = await maintainer.post(`/api/layouts/${SLUG}/sessions/import`).attach("file", Buffer.from(jsonl), "scripted-day.jsonl");
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    sessionId = res.body.sessionId;
    const viewer = await t.signIn("viewer");
    const got = await viewer.get(`/api/sessions/${sessionId}/report`);
    expect(got.status, JSON.stringify(got.body)).toBe(200);
    report = got.body;
  });
  afterAll(async () => {
    await t?.close();
  });

  it("spans the session and names its layout and priority route", () => {
    expect(report).toMatchObject({ sessionId, layout: { slug: SLUG }, from: at(0), until: at(320.5), open: false, priorityRoute: "main", importedFrom: "scripted-day.jsonl" });
  });

  it("counts each route's trains and their waits at the signal", () => {
    const main = report.routes.find((r) => r.id === "main")!;
    const branch = report.routes.find((r) => r.id === "branch")!;
    expect(main).toMatchObject({ signal: "M1", trains: 3, waits: { count: 2, medianS: 24.25, maxS: 30 }, waitsS: [18.5, 30] });
    expect(branch).toMatchObject({ signal: "B1", trains: 3, waits: { count: 0, medianS: null, maxS: null }, waitsS: [] });
  });

  it("follows every train along its route", () => {
    expect(report.trains.map((tr) => [tr.n, tr.route, tr.axles, tr.waitedS, tr.mismatches])).toEqual([
      [1, "main", 2, 0, []],
      [2, "branch", 2, 0, []],
      [3, "branch", 2, 0, []],
      [4, "main", 2, 18.5, []],
      [5, "main", 2, 30, []],
      [6, "branch", 2, 0, ["BE"]],
    ]);
    expect(report.trains[3]).toMatchObject({ arrivedAt: at(112), atSignalAt: at(112), enteredAt: at(135), clearedAt: at(140.5) });
  });

  it("finds the one time the priority train met danger with the junction free, with the state that held it", () => {
    expect(report.checks).toHaveLength(1);
    const check = report.checks[0];
    expect(check).toMatchObject({ route: "main", signal: "M1", train: 5, from: at(210), until: at(240), seconds: 30, held: false, faulted: false });
    expect(check.counters.junction).toBe(1);
    expect(check.eventId).toMatch(/^\d+$/);
    expect(check.inputIndex).toBeGreaterThan(0);
  });

  it("counts pulses, stray pulses and axle-count mismatches per detector", () => {
    const byId = Object.fromEntries(report.detectors.map((d) => [d.id, d]));
    expect(byId.MA).toMatchObject({ pulses: 6, duplicate: 1, rejected: 0, trains: 3, mismatches: 0, stray: 0 });
    expect(byId.ME).toMatchObject({ pulses: 7, trains: 3, mismatches: 0, stray: 1 });
    expect(byId.BE).toMatchObject({ pulses: 5, trains: 3, mismatches: 1, stray: 0 });
    expect(byId.JX).toMatchObject({ pulses: 12, trains: 6, mismatches: 0, stray: 0 });
  });

  it("gives each board's time offline", () => {
    const byId = Object.fromEntries(report.nodes.map((n) => [n.id, n]));
    expect(byId["bank-foot"]).toMatchObject({ offlineS: 0, uptime: 1, neverConnected: false });
    expect(byId.quarry).toMatchObject({ offlineS: 35, neverConnected: false, offline: [{ from: at(0), until: at(5) }, { from: at(150), until: at(180) }] });
  });

  it("draws each signal's aspects through the day", () => {
    const m1 = report.signals.find((s) => s.id === "M1")!;
    expect(m1.changes.slice(0, 3)).toEqual([
      { at: at(0), aspect: "danger" },
      { at: at(10), aspect: "clear" },
      { at: at(20), aspect: "danger" },
    ]);
    expect(m1.changes).toContainEqual({ at: at(240), aspect: "clear" });
  });

  it("exports each table as CSV with plain cells", async () => {
    const viewer = await t.signIn("viewer");
    const res = await viewer.get(`/api/sessions/${sessionId}/report?format=csv&table=routes`);
    expect(res.status).toBe(200);
    expect(res.headers["content-type"]).toMatch(/text\/csv/);
    expect(res.text.split("\r\n")).toEqual([
      "route,signal,trains,waits,median_wait_s,max_wait_s,priority_checks",
      "main,M1,3,2,24.25,30,1",
      "branch,B1,3,0,,,",
      // Kestrel Bank's shed road ran no train in this session: listed, with nothing to say.
      "shed,S1,0,0,,,",
      "",
    ]);
    const checks = await viewer.get(`/api/sessions/${sessionId}/report?format=csv&table=checks`);
    expect(checks.text).toContain(`main,M1,5,${at(210)},${at(240)},30,`);
    expect(checks.text).not.toMatch(/[{}]/);
  });

  it("refuses a bad table and an unknown session", async () => {
    const viewer = await t.signIn("viewer");
    const bad = await viewer.get(`/api/sessions/${sessionId}/report?format=csv&table=everything`);
    expect(bad.status).toBe(400);
    expect(bad.body.error.details[0].path).toContain("table");
    expect((await viewer.get(`/api/sessions/999999/report`)).status).toBe(404);
  });
});
