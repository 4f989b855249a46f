/**
 * Every route of every feature router mounted under /api, read from the routers themselves
 * (not from a list kept by hand), with the guard its handlers carry. The route × role matrix
 * (tests/api/roles.test.ts) checks the guards; the REST map test (tests/api/rest-map.test.ts)
 * checks the routes against shared/contract/restMap.ts.
 */
import { API_ROUTERS } from "../../server/app";
import type { AppDeps } from "../../server/deps";
import type { RouteGuard } from "../../server/features/auth/middleware";

export type RouteMethod = "get" | "post" | "put" | "patch" | "delete";
export interface AppRoute {
  method: RouteMethod;
  /** As the feature router names it, without the `/api` it is mounted under. */
  path: string;
  guard: RouteGuard | undefined;
}

export function apiRoutes(deps: AppDeps): AppRoute[] {
  type Layer = { route?: { path: string; methods: Record<string, boolean>; stack: { handle: { guard?: RouteGuard } }[] } };
  return API_ROUTERS.flatMap((factory) =>
    (factory(deps).stack as Layer[]).flatMap((layer) => {
      if (!layer.route) return [];
      const guard = layer.route.stack.map((s) => s.handle.guard).find(Boolean);
      return Object.keys(layer.route.methods).map((method) => ({ method: method as RouteMethod, path: layer.route!.path, guard }));
    }),
  );
}
