/**
 * The route × role matrix: every route answers 401 to the anonymous, 403 to a role it does
 * not serve, and success to each role it does. New routes add a row here.
 */
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { ROLES, type Role } from "../../shared/contract/rest";
import { kestrelBankLayout } from "../../shared/demo/fernmoor";
import { startTestApp, type TestApp } from "../support/testApp";
import { startLiveHarness, type LiveHarness } from "../support/live";
import { raiseAlarm } from "../../server/features/alarms/service";

type Method = "get" | "post" | "delete";
interface RouteCase {
  method: Method;
  path: string;
  allowed: readonly Role[];
  /** A body that succeeds for an allowed role; may vary per role to stay unique. */
  body?: (role: Role) => unknown;
  okStatus?: number;
}

const EVERYONE = ROLES;
const layoutCopy = (role: Role) => ({ ...kestrelBankLayout(), slug: `matrix-${role}` });

const ROUTES: RouteCase[] = [
  { method: "get", path: "/api/me", allowed: EVERYONE },
  { method: "get", path: "/api/layouts", allowed: EVERYONE },
  { method: "post", path: "/api/layouts/import", allowed: ["engineer", "admin"], body: layoutCopy, okStatus: 201 },
  { method: "get", path: "/api/layouts/kestrel-bank", allowed: EVERYONE },
  { method: "get", path: "/api/layouts/kestrel-bank/export", allowed: EVERYONE },
  {
    method: "post",
    path: "/api/layouts/kestrel-bank/nodes",
    allowed: ["engineer", "maintainer", "admin"],
    body: (role) => ({ id: `spare-${role}`, name: "Spare board", detectors: [], signals: [] }),
    okStatus: 201,
  },
  { method: "get", path: "/api/layouts/kestrel-bank/rulebooks/1", allowed: EVERYONE },
  {
    method: "post",
    path: "/api/layouts/kestrel-bank/rulebooks",
    allowed: ["engineer", "admin"],
    body: () => ({ rulebook: kestrelBankLayout().rulebook, note: "matrix" }),
    okStatus: 201,
  },
  {
    method: "post",
    path: "/api/layouts/kestrel-bank/rulebooks/1/publish",
    allowed: ["engineer", "admin"],
    body: () => ({ withoutProof: true, reason: "matrix check" }),
  },
  {
    method: "post",
    path: "/api/simulate",
    allowed: EVERYONE,
    body: () => ({ layout: kestrelBankLayout(), events: [{ type: "pulse", detector: "MA", at: "2026-05-02T10:15:03.120Z" }] }),
  },
  { method: "get", path: "/api/layouts/kestrel-bank/audit", allowed: EVERYONE },
  { method: "get", path: "/api/admin/outbox", allowed: ["admin"] },
  { method: "get", path: "/api/admin/members", allowed: ["admin"] },
  {
    method: "post",
    path: "/api/invitations",
    allowed: ["admin"],
    body: (role) => ({ email: `invitee-${role}@fernmoor.example`, role: "viewer" }),
    okStatus: 201,
  },
  // Proving (a job of the published version never changes its status; unknown job ids are 404 past the role check)
  { method: "post", path: "/api/prove", allowed: EVERYONE, body: () => kestrelBankLayout() },
  { method: "post", path: "/api/layouts/kestrel-bank/rulebooks/1/proofs", allowed: ["engineer", "admin"], okStatus: 202 },
  { method: "get", path: "/api/layouts/kestrel-bank/proofs", allowed: EVERYONE },
  { method: "get", path: "/api/proofs/00000000-0000-4000-8000-000000000000", allowed: EVERYONE, okStatus: 404 },
  { method: "delete", path: "/api/proofs/00000000-0000-4000-8000-000000000000", allowed: ["engineer", "admin"], okStatus: 404 },
  // Live pipeline (the matrix's beforeAll starts a broker and runtime, one alarm, one display link, one session)
  { method: "get", path: "/api/layouts/kestrel-bank/live", allowed: EVERYONE },
  {
    method: "post",
    path: "/api/layouts/kestrel-bank/commands",
    allowed: ["signaller", "admin"],
    body: () => ({ type: "hold", signal: "M1", reason: "matrix check" }),
  },
  { method: "post", path: "/api/layouts/kestrel-bank/sessions", allowed: ["signaller", "admin"], body: () => ({ action: "open" }) },
  { method: "get", path: "/api/layouts/kestrel-bank/sessions", allowed: EVERYONE },
  { method: "get", path: "/api/sessions/1/events?format=jsonl", allowed: EVERYONE },
  { method: "get", path: "/api/sessions/1/events?format=csv", allowed: EVERYONE },
  { method: "get", path: "/api/sessions/1/events?format=json&limit=10&kind=pulse", allowed: EVERYONE },
  { method: "get", path: "/api/sessions/1/inputs", allowed: EVERYONE },
  // No file attached: 400 past the role check (uploads themselves: sessions-import.test.ts)
  { method: "post", path: "/api/layouts/kestrel-bank/sessions/import", allowed: ["maintainer", "admin"], okStatus: 400 },
  { method: "get", path: "/api/layouts/kestrel-bank/alarms?state=all", allowed: EVERYONE },
  {
    method: "post",
    path: "/api/alarms/1/acknowledge",
    allowed: ["signaller", "maintainer", "admin"],
    body: (role) => ({ comment: `seen by the ${role}` }),
  },
  { method: "post", path: "/api/layouts/kestrel-bank/display-links", allowed: ["admin"], body: () => ({ label: "matrix" }), okStatus: 201 },
  { method: "get", path: "/api/layouts/kestrel-bank/display-links", allowed: ["admin"] },
  { method: "delete", path: "/api/layouts/kestrel-bank/display-links/1", allowed: ["admin"], okStatus: 204 },
];

describe("route × role matrix", () => {
  let t: TestApp;
  let live: LiveHarness;
  const agents = new Map<Role, Awaited<ReturnType<TestApp["signIn"]>>>();
  beforeAll(async () => {
    t = await startTestApp();
    for (const role of ROLES) agents.set(role, await t.signIn(role));
    live = await startLiveHarness(t);
    const layout = await t.deps.db.models.Layout.findOne({ where: { slug: "kestrel-bank" } });
    await raiseAlarm(t.deps, { layoutId: layout!.id, kind: "node-offline", subject: "junction", message: "matrix alarm" });
    await live.runtime.session("kestrel-bank", "open", { id: 1, name: "matrix" });
    await agents.get("admin")!.post("/api/layouts/kestrel-bank/display-links").send({ label: "matrix link 1" });
  });
  afterAll(async () => {
    await live?.close();
    await t.close();
  });

  const rows = ROUTES.flatMap((route) => [
    { route, role: "anonymous" as const },
    ...ROLES.map((role) => ({ route, role })),
  ]);

  it.each(rows.map((r) => [`${r.route.method.toUpperCase()} ${r.route.path} as ${r.role}`, r] as const))("%s", async (_name, { route, role }) => {
    const send = (agent: ReturnType<typeof request.agent> | ReturnType<typeof request>) => {
      const req = agent[route.method](route.path);
      const body = route.body?.(role === "anonymous" ? "viewer" : role);
      return body === undefined ? req : req.send(body as object);
    };
    if (role === "anonymous") {
      const res = await send(request(t.app));
      expect(res.status).toBe(401);
      expect(res.body.error.code).toBe("unauthenticated");
      return;
    }
    const res = await send(agents.get(role)!);
    if (route.allowed.includes(role)) {
      expect(res.status, JSON.stringify(res.body)).toBe(route.okStatus ?? 200);
    } else {
      expect(res.status).toBe(403);
      expect(res.body.error.code).toBe("forbidden");
    }
  });

  it("health needs no sign-in and reports the database", async () => {
    const res = await request(t.app).get("/api/health");
    expect(res.body.db).toBe("up");
  });

  it("an unknown API path is a 404 in the contract's error shape, not the client page", async () => {
    const res = await agents.get("viewer")!.get("/api/no-such-thing");
    expect(res.status).toBe(404);
    expect(res.body.error.code).toBe("not_found");
  });
});
