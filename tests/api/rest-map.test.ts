/**
 * The REST map (shared/contract/restMap.ts) and the server agree: every route a feature router
 * answers is in the map, and every route of the map is answered. The routes are read from the
 * routers (tests/support/apiRoutes.ts, the walk the route × role matrix uses), so a handler
 * added without its line in the map, or a line left behind by a removed handler, fails here.
 */
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { REST_ROUTES, splitRoute, type RestRoute } from "@shared/contract/restMap";
import { apiRoutes } from "../support/apiRoutes";
import { startTestApp, type TestApp } from "../support/testApp";

describe("REST map ⇄ server routes", () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await startTestApp({ demo: false });
  });
  afterAll(async () => {
    await t.close();
  });

  const mapped = Object.keys(REST_ROUTES) as RestRoute[];
  const served = () => apiRoutes(t.deps).map((r) => `${r.method.toUpperCase()} /api${r.path}`);

  it("every route a feature router answers has its line in the REST map", () => {
    expect(served().filter((route) => !(route in REST_ROUTES))).toEqual([]);
  });

  it("every line of the REST map is a route the server answers (same method, same :names)", () => {
    const answered = new Set(served());
    expect(mapped.filter((route) => !answered.has(route))).toEqual([]);
  });

  it("no route is answered twice (a second handler on one path would never run)", () => {
    const seen = served();
    expect(seen.filter((route, i) => seen.indexOf(route) !== i)).toEqual([]);
  });

  // The walk reads Express's internals: if they changed shape it would find nothing and the
  // two checks above would pass vacuously. A route the map names must also reach a handler.
  it("the walk sees the routers the app mounts: a mapped route reaches its handler, an unmapped one is the API's 404", async () => {
    expect(served().length).toBe(mapped.length);
    const { method, pattern } = splitRoute("GET /api/setup");
    const res = await request(t.app)[method.toLowerCase() as "get"](pattern);
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ needed: true });
    const unknown = await request(t.app).get("/api/setup/not-a-route");
    expect(unknown.status).toBe(404);
    expect(unknown.body.error.code).toBe("not_found");
  });
});
