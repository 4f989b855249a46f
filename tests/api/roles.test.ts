/**
 * The route × role matrix: every route answers 401 to the anonymous, 403 to a role it does
 * not serve, and success to each role it does. New routes add a row here.
 */
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { ROLES, type Role } from "../../shared/contract/rest";
import { kestrelBankLayout } from "../../shared/demo/fernmoor";
import { startTestApp, type TestApp } from "../support/testApp";

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
  { method: "post", path: "/api/layouts/kestrel-bank/rulebooks/1/publish", allowed: ["engineer", "admin"] },
  {
    method: "post",
    path: "/api/simulate",
    allowed: EVERYONE,
    body: () => ({ layout: kestrelBankLayout(), events: [{ type: "pulse", detector: "MA", at: "2026-05-02T10:15:03.120Z" }] }),
  },
];

describe("route × role matrix", () => {
  let t: TestApp;
  const agents = new Map<Role, Awaited<ReturnType<TestApp["signIn"]>>>();
  beforeAll(async () => {
    t = await startTestApp();
    for (const role of ROLES) agents.set(role, await t.signIn(role));
  });
  afterAll(() => t.close());

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
