import { Router } from "express";
import { createNodeBodySchema, type LayoutResponse, type LayoutsResponse } from "../../../shared/contract/rest";
import type { AppDeps } from "../../deps";
import { parseWith } from "../../http/errors";
import { requirePermission, requireSignedIn } from "../auth/middleware";
import { exportLayout, importLayout, layoutDetail, listLayouts, registerNode } from "./service";

export function layoutRoutes(deps: AppDeps): Router {
  const router = Router();

  router.get("/layouts", requireSignedIn, async (_req, res) => {
    const body: LayoutsResponse = { layouts: await listLayouts(deps) };
    res.json(body);
  });

  router.post("/layouts/import", requirePermission("layouts.import"), async (req, res) => {
    const { slug } = await importLayout(deps, req.body, req.user!.id);
    res.status(201).json({ slug });
  });

  router.get("/layouts/:slug", requireSignedIn, async (req, res) => {
    const body: LayoutResponse = { layout: await layoutDetail(deps, String(req.params.slug)) };
    res.json(body);
  });

  router.get("/layouts/:slug/export", requireSignedIn, async (req, res) => {
    const file = await exportLayout(deps, String(req.params.slug));
    res.setHeader("Content-Disposition", `attachment; filename="${file.slug}.layout.json"`);
    res.json(file);
  });

  router.post("/layouts/:slug/nodes", requirePermission("nodes.manage"), async (req, res) => {
    const body = parseWith(createNodeBodySchema, req.body);
    res.status(201).json(await registerNode(deps, String(req.params.slug), body));
  });

  return router;
}
