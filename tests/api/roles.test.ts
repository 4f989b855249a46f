/**
 * The route × role matrix: every route answers 401 to the anonymous, 403 to a role it does
 * not serve, and success to each role it does. New routes add a row here.
 */
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { allows, type Action } from "@shared/contract/permissions";
import { ROLES, type Role } from "@shared/contract/rest";
import { kestrelBankLayout } from "@shared/demo/fernmoor";
import { findTemplate } from "@shared/rulebook/templateCatalog";
import { DEMO_PASSWORD } from "../../server/db/seed/demo";
import { startTestApp, type TestApp } from "../support/testApp";
import { startLiveHarness, type LiveHarness } from "../support/live";
import { raiseAlarm } from "../../server/features/alarms/service";
import { createLayout } from "../../server/features/layouts/edit";
import { apiRoutes, type RouteMethod as Method } from "../support/apiRoutes";

interface RouteCase {
  method: Method;
  /** A function when the path names a row made in beforeAll. */
  path: string | (() => string);
  /** The permission the route's guard names; the roles it allows come from the one table. */
  action: Action;
  /** A body that succeeds for an allowed role; may vary per role to stay unique. */
  body?: (role: Role) => unknown;
  okStatus?: number;
  /** Signs in afresh for this row (it ends the session it runs in). */
  ownSession?: boolean;
}

const layoutCopy = (role: Role) => ({ ...kestrelBankLayout(), slug: `matrix-${role}` });
const editBody = (revision: number) => ({
  format: "blocklight.layout/1",
  slug: "matrix-edit",
  name: "Matrix edit",
  scale: { name: "G", ratio: 22.5 },
  lines: [{ id: "main", name: "Main line" }],
  revision,
});
/** Rows the member-admin rows act on, made in beforeAll (never a demo account the other rows sign in as). */
const spare = { memberId: 0, removableId: 0, invitationId: 0, revocableId: 0 };
const pathOf = (path: RouteCase["path"]) => (typeof path === "string" ? path : path());

const ROUTES: RouteCase[] = [
  { method: "get", path: "/api/me", action: "read" },
  { method: "post", path: "/api/auth/logout", action: "read", ownSession: true },
  { method: "get", path: "/api/layouts", action: "read" },
  { method: "post", path: "/api/layouts/import", action: "layouts.import", body: layoutCopy, okStatus: 201 },
  { method: "get", path: "/api/layouts/kestrel-bank", action: "read" },
  { method: "get", path: "/api/layouts/kestrel-bank/export", action: "read" },
  {
    method: "post", path: "/api/layouts/kestrel-bank/nodes", action: "nodes.manage",
    body: (role) => ({ id: `spare-${role}`, name: "Spare board", detectors: [], signals: [] }),
    okStatus: 201,
  },
  { method: "get", path: "/api/layouts/kestrel-bank/rulebooks/1", action: "read" },
  {
    method: "post", path: "/api/layouts/kestrel-bank/rulebooks", action: "rulebooks.edit",
    body: () => ({ rulebook: kestrelBankLayout().rulebook, note: "matrix" }),
    okStatus: 201,
  },
  {
    method: "post", path: "/api/layouts/kestrel-bank/rulebooks/1/publish", action: "rulebooks.publish",
    body: () => ({ withoutProof: true, reason: "matrix check" }),
  },
  // The workbench (beforeAll creates "matrix-edit" and "matrix-archive", both empty)
  {
    method: "post", path: "/api/layouts", action: "layouts.create",
    body: (role) => ({ slug: `new-${role}`, name: `New layout of the ${role}`, scale: { name: "G", ratio: 22.5 } }),
    okStatus: 201,
  },
  // Rows run in ROLES order (admin before engineer), each save moving the revision on by one.
  { method: "put", path: "/api/layouts/matrix-edit", action: "layouts.edit", body: (role) => editBody(role === "admin" ? 1 : 2) },
  { method: "post", path: "/api/layouts/matrix-archive/archive", action: "layouts.archive" },
  { method: "post", path: "/api/layouts/matrix-archive/restore", action: "layouts.archive" },
  { method: "get", path: "/api/templates", action: "templates.use" },
  {
    method: "post", path: "/api/templates/converging-junction", action: "templates.use",
    body: () => ({ options: findTemplate("converging-junction")!.example }),
  },
  {
    method: "post", path: "/api/simulate", action: "read",
    body: () => ({ layout: kestrelBankLayout(), events: [{ type: "pulse", detector: "MA", at: "2026-05-02T10:15:03.120Z" }] }),
  },
  { method: "get", path: "/api/layouts/kestrel-bank/audit", action: "read" },
  { method: "get", path: "/api/admin/outbox", action: "outbox.read" },
  { method: "get", path: "/api/admin/members", action: "members.manage" },
  {
    method: "post", path: "/api/invitations", action: "members.manage",
    body: (role) => ({ email: `invitee-${role}@fernmoor.example`, role: "viewer" }),
    okStatus: 201,
  },
  // Proving (a job of the published version never changes its status; unknown job ids are 404 past the role check)
  { method: "post", path: "/api/prove", action: "read", body: () => kestrelBankLayout() },
  { method: "post", path: "/api/layouts/kestrel-bank/rulebooks/1/proofs", action: "proofs.run", okStatus: 202 },
  { method: "get", path: "/api/layouts/kestrel-bank/proofs", action: "read" },
  { method: "get", path: "/api/proofs/00000000-0000-4000-8000-000000000000", action: "read", okStatus: 404 },
  { method: "delete", path: "/api/proofs/00000000-0000-4000-8000-000000000000", action: "proofs.run", okStatus: 404 },
  // Live pipeline (the matrix's beforeAll starts a broker and runtime, one alarm, one display link, one session)
  { method: "get", path: "/api/layouts/kestrel-bank/live", action: "read" },
  {
    method: "post", path: "/api/layouts/kestrel-bank/commands", action: "live.control",
    body: () => ({ type: "hold", signal: "M1", reason: "matrix check" }),
  },
  { method: "post", path: "/api/layouts/kestrel-bank/sessions", action: "live.control", body: () => ({ action: "open" }) },
  { method: "get", path: "/api/layouts/kestrel-bank/sessions", action: "read" },
  { method: "get", path: "/api/sessions/1/events?format=jsonl", action: "read" },
  { method: "get", path: "/api/sessions/1/events?format=csv", action: "read" },
  { method: "get", path: "/api/sessions/1/events?format=json&limit=10&kind=pulse", action: "read" },
  { method: "get", path: "/api/sessions/1/inputs", action: "read" },
  { method: "get", path: "/api/sessions/1/events?format=json&tail=20", action: "read" },
  { method: "get", path: "/api/sessions/1/report", action: "read" },
  { method: "get", path: "/api/sessions/1/report?format=csv&table=trains", action: "read" },
  { method: "get", path: "/api/layouts/kestrel-bank/alarm-settings", action: "read" },
  { method: "put", path: "/api/layouts/kestrel-bank/alarm-settings", action: "alarm-settings.edit", body: () => ({ stuckAfterMs: 300_000 }) },
  // No file attached: 400 past the role check (uploads themselves: sessions-import.test.ts)
  { method: "post", path: "/api/layouts/kestrel-bank/sessions/import", action: "sessions.import", okStatus: 400 },
  { method: "get", path: "/api/layouts/kestrel-bank/alarms?state=all", action: "read" },
  {
    method: "post", path: "/api/alarms/1/acknowledge", action: "alarms.acknowledge",
    body: (role) => ({ comment: `seen by the ${role}` }),
  },
  { method: "post", path: "/api/layouts/kestrel-bank/display-links", action: "display-links.manage", body: () => ({ label: "matrix" }), okStatus: 201 },
  { method: "get", path: "/api/layouts/kestrel-bank/display-links", action: "display-links.manage" },
  { method: "delete", path: "/api/layouts/kestrel-bank/display-links/1", action: "display-links.manage", okStatus: 204 },
  // Accounts (issue 11): one's own account, and the admin's members, invitations and account audit
  { method: "patch", path: "/api/me", action: "read", body: (role) => ({ name: `Fernmoor ${role}`, currentPassword: DEMO_PASSWORD }) },
  { method: "patch", path: "/api/me/preferences", action: "read", body: () => ({ alarmMail: false }) },
  { method: "patch", path: () => `/api/admin/members/${spare.memberId}`, action: "members.manage", body: () => ({ alarmMail: true }) },
  { method: "delete", path: () => `/api/admin/members/${spare.removableId}`, action: "members.manage", okStatus: 204 },
  { method: "post", path: () => `/api/admin/invitations/${spare.invitationId}/resend`, action: "members.manage" },
  { method: "delete", path: () => `/api/admin/invitations/${spare.revocableId}`, action: "members.manage", okStatus: 204 },
  { method: "get", path: "/api/admin/audit", action: "members.manage" },
  { method: "patch", path: "/api/society", action: "members.manage", body: () => ({ name: "Fernmoor Garden Railway Society" }) },
];

/** Routes for people without an account (yet): every caller gets the same answer. */
const PUBLIC_ROUTES: { method: Method; path: string; body?: unknown; status: number }[] = [
  { method: "get", path: "/api/health", status: 200 },
  { method: "get", path: "/api/setup", status: 200 },
  { method: "get", path: "/api/society", status: 200 },
  // The demo has accounts, so setup is done whoever asks.
  { method: "post", path: "/api/setup", body: { token: "x", society: "S", name: "N", email: "n@fernmoor.example", password: "long-enough-pw" }, status: 409 },
  { method: "post", path: "/api/auth/reset", body: { email: "nobody@fernmoor.example" }, status: 202 },
  { method: "post", path: "/api/auth/reset/not-a-token", body: { password: "long-enough-pw" }, status: 404 },
  { method: "get", path: "/api/invitations/not-a-token", status: 404 },
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
    const admin = await t.deps.db.models.User.findOne({ where: { role: "admin" } });
    for (const slug of ["matrix-edit", "matrix-archive"]) await createLayout(t.deps, { slug, name: slug, scale: { name: "G", ratio: 22.5 } }, admin!.id);
    const { User } = t.deps.db.models;
    spare.memberId = (await User.create({ email: "spare.member@fernmoor.example", name: "Spare member", role: "viewer", passwordHash: "x" })).id;
    spare.removableId = (await User.create({ email: "spare.leaver@fernmoor.example", name: "Spare leaver", role: "viewer", passwordHash: "x" })).id;
    const invite = (email: string) => agents.get("admin")!.post("/api/invitations").send({ email, role: "viewer" });
    spare.invitationId = (await invite("spare.invitee@fernmoor.example")).body.id;
    spare.revocableId = (await invite("spare.revoked@fernmoor.example")).body.id;
  });
  afterAll(async () => {
    await live?.close();
    await t.close();
  });

  const rows = ROUTES.flatMap((route) => [
    { route, role: "anonymous" as const },
    ...ROLES.map((role) => ({ route, role })),
  ]);

  // Lazy paths are named by their pattern: the ids exist only once beforeAll has run.
  const shown = (path: RouteCase["path"]) => (typeof path === "string" ? path : path().replace(/\/0(\/|$)/, "/:id$1"));
  it.each(rows.map((r) => [`${r.route.method.toUpperCase()} ${shown(r.route.path)} as ${r.role}`, r] as const))("%s", async (_name, { route, role }) => {
    const send = (agent: ReturnType<typeof request.agent> | ReturnType<typeof request>) => {
      const req = agent[route.method](pathOf(route.path));
      const body = route.body?.(role === "anonymous" ? "viewer" : role);
      return body === undefined ? req : req.send(body as object);
    };
    if (role === "anonymous") {
      const res = await send(request(t.app));
      expect(res.status).toBe(401);
      expect(res.body.error.code).toBe("unauthenticated");
      return;
    }
    const res = await send(route.ownSession ? await t.signIn(role) : agents.get(role)!);
    if (allows(role, route.action)) {
      expect(res.status, JSON.stringify(res.body)).toBe(route.okStatus ?? 200);
    } else {
      expect(res.status).toBe(403);
      expect(res.body.error.code).toBe("forbidden");
    }
  });

  it("every API route names its guard, and each guarded one has rows here agreeing with it", () => {
    const problems: string[] = [];
    for (const route of apiRoutes(t.deps)) {
      const label = `${route.method.toUpperCase()} /api${route.path}`;
      if (!route.guard) {
        problems.push(`${label} has no guard (requirePermission, requireSignedIn or allowAnyone)`);
        continue;
      }
      if ("public" in route.guard) continue;
      const pattern = new RegExp(`^/api${route.path.replace(/:[A-Za-z]+/g, "[^/]+")}$`);
      const rows = ROUTES.filter((row) => row.method === route.method && pattern.test(pathOf(row.path).split("?")[0]));
      if (rows.length === 0) problems.push(`${label} (${route.guard.action}) has no row in the matrix`);
      for (const row of rows) {
        if (row.action !== route.guard.action) problems.push(`${label}: the guard says ${route.guard.action}, the row ${row.path} says ${row.action}`);
      }
    }
    expect(problems).toEqual([]);
  });

  it.each(PUBLIC_ROUTES.flatMap((route) => ["anonymous", ...ROLES].map((who) => [`${route.method.toUpperCase()} ${route.path} as ${who}`, route, who] as const)))(
    "%s (public)",
    async (_name, route, who) => {
      const agent = who === "anonymous" ? request(t.app) : agents.get(who as Role)!;
      const req = agent[route.method](route.path);
      const res = await (route.body === undefined ? req : req.send(route.body as object));
      expect(res.status, JSON.stringify(res.body)).toBe(route.status);
    },
  );

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
