/**
 * The typed client over the REST map: a route's name fixes its parameters, body, query and
 * reply (checked by `npm run typecheck`: each @ts-expect-error must be an error), and the URL it
 * builds is the route's pattern filled in.
 */
import { describe, expect, expectTypeOf, it } from "vitest";
import { api, apiUrl } from "../../src/api/client";
import { fillPattern, queryString } from "@shared/contract/pathPattern";
import type { LayoutResponse, MeResponse } from "@shared/contract/rest";
import type { SessionEventPage } from "@shared/contract/sessions";

describe("api() types", () => {
  it("names the reply by the route", () => {
    expectTypeOf(api<"GET /api/layouts/:slug">).returns.resolves.toEqualTypeOf<LayoutResponse>();
    expectTypeOf(api<"GET /api/me">).returns.resolves.toEqualTypeOf<MeResponse>();
    expectTypeOf(api<"GET /api/sessions/:id/events">).returns.resolves.toEqualTypeOf<SessionEventPage>();
    expectTypeOf(api<"DELETE /api/admin/members/:id">).returns.resolves.toEqualTypeOf<void>();
  });

  it("refuses a call that does not fit the route", () => {
    // Never run: only the types are under test here.
    const calls = () => {
      // @ts-expect-error the slug is missing
      void api("GET /api/layouts/:slug", {});
      // @ts-expect-error a route not in the map
      void api("GET /api/layouts/:slug/nothing", { slug: "x" });
      // @ts-expect-error the body is missing
      void api("POST /api/auth/login", {});
      // @ts-expect-error a body of the wrong shape
      void api("PATCH /api/me/preferences", { body: { alarmMail: "yes" } });
      // @ts-expect-error the event page needs format=json
      void api("GET /api/sessions/:id/events", { id: 1, query: { limit: 10 } });
      // @ts-expect-error a download format is a link (apiUrl), not a JSON call
      void api("GET /api/sessions/:id/events", { id: 1, query: { format: "csv" } });
      // @ts-expect-error apiUrl takes the download's query
      void apiUrl("GET /api/sessions/:id/report", { id: 1, query: { format: "pdf", table: "routes" } });
      void api("GET /api/me");
    };
    expect(typeof calls).toBe("function");
  });
});

describe("URLs", () => {
  it("fills each :name, encoded", () => {
    expect(fillPattern("/layouts/:slug/sessions/:id/replay", { slug: "kestrel bank/2", id: 7 })).toBe("/layouts/kestrel%20bank%2F2/sessions/7/replay");
  });

  it("refuses a pattern value left out past the types", () => {
    expect(() => fillPattern("/layouts/:slug", {} as { slug: string })).toThrow(":slug");
  });

  it("leaves undefined and empty query values out", () => {
    expect(queryString({ format: "json", after: "0", limit: 100, kind: undefined, q: "" })).toBe("?format=json&after=0&limit=100");
    expect(queryString({})).toBe("");
  });

  it("builds download links from the map", () => {
    expect(apiUrl("GET /api/sessions/:id/events", { id: 4, query: { format: "csv" } })).toBe("/api/sessions/4/events?format=csv");
    expect(apiUrl("GET /api/sessions/:id/report", { id: 4, query: { format: "csv", table: "trains" } })).toBe("/api/sessions/4/report?format=csv&table=trains");
    expect(apiUrl("GET /api/layouts/:slug/export", { slug: "fernmoor-yard" })).toBe("/api/layouts/fernmoor-yard/export");
  });
});
