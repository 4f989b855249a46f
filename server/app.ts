/**
 * Builds the Express app from its dependencies. Importable by tests: no ports, no
 * processes, nothing started here.
 */
import fs from "node:fs";
import path from "node:path";
import cookieParser from "cookie-parser";
import express, { type Express } from "express";
import helmet from "helmet";
import type { AppDeps } from "./deps";
import { authRoutes } from "./features/auth/routes";
import { loadUser } from "./features/auth/middleware";
import { healthRoutes } from "./features/health";
import { layoutRoutes } from "./features/layouts/routes";
import { rulebookRoutes } from "./features/rulebooks/routes";
import { simulateRoutes } from "./features/simulate/routes";
import { alarmRoutes } from "./features/alarms/routes";
import { liveRoutes } from "./features/live/routes";
import { sessionRoutes } from "./features/sessions/routes";
import { proveRoutes } from "./features/prove/routes";
import { auditRoutes } from "./features/audit/routes";
import { displayRoutes } from "./features/display/routes";
import { mailRoutes } from "./features/mail/routes";
import { memberRoutes } from "./features/members/routes";
import { templateRoutes } from "./features/templates/routes";
import { setupRoutes } from "./features/setup/routes";
import { errorHandler, notFoundApi } from "./http/errors";

/** Layout files with large schematics and simulator input lists stay well under this. */
const JSON_BODY_LIMIT = "5mb";

export type ApiRouterFactory = (deps: AppDeps) => express.Router;

/** Feature routers mounted under /api; later features append theirs here. */
export const API_ROUTERS: ApiRouterFactory[] = [
  healthRoutes,
  authRoutes,
  layoutRoutes,
  rulebookRoutes,
  simulateRoutes,
  alarmRoutes,
  liveRoutes,
  sessionRoutes,
  proveRoutes,
  auditRoutes,
  displayRoutes,
  mailRoutes,
  memberRoutes,
  templateRoutes,
  setupRoutes,
];

export function createApp(deps: AppDeps, extraRouters: ApiRouterFactory[] = []): Express {
  const app = express();
  app.disable("x-powered-by");
  app.set("trust proxy", "loopback");
  app.use(
    helmet({
      contentSecurityPolicy: {
        directives: {
          "default-src": ["'self'"],
          "connect-src": ["'self'", "ws:", "wss:"],
          "img-src": ["'self'", "data:"],
          "style-src": ["'self'", "'unsafe-inline'"],
          "font-src": ["'self'", "data:"],
          "upgrade-insecure-requests": null,
        },
      },
    }),
  );
  app.use(cookieParser());
  app.use(express.json({ limit: JSON_BODY_LIMIT }));

  const api = express.Router();
  api.use(loadUser(deps));
  for (const factory of [...API_ROUTERS, ...extraRouters]) api.use(factory(deps));
  api.use(notFoundApi);
  app.use("/api", api);

  if (deps.config.serveClient) serveClient(app);
  app.use(errorHandler(deps.logger));
  return app;
}

/** The built React client from dist/, with the SPA fallback kept off /api and /assets. */
function serveClient(app: Express): void {
  const dist = path.resolve("dist");
  const index = path.join(dist, "index.html");
  app.use("/assets", express.static(path.join(dist, "assets"), { immutable: true, maxAge: "1y", fallthrough: false }));
  app.use(express.static(dist, { index: false }));
  app.get("/{*splat}", (req, res, next) => {
    if (req.path.startsWith("/api/") || req.path.startsWith("/socket.io/")) return next();
    if (!fs.existsSync(index)) {
      res.status(503).type("text").send("The client is not built yet: run `npm run build` (npm start does it for you).");
      return;
    }
    res.sendFile(index);
  });
}
