import { Router } from "express";
import { createLayoutBodySchema } from "@shared/contract/layoutEdit";
import { createNodeBodySchema, type LayoutResponse, type LayoutsResponse } from "@shared/contract/rest";
import type { AppDeps } from "../../deps";
import { parseWith } from "../../http/errors";
import { requirePermission, requireSignedIn } from "../auth/middleware";
import { layoutDetail } from "../../data/layouts";
import { exportLayout, importLayout, listLayouts, registerNode } from "./service";
import { createLayout, saveLayout, setArchived } from "./edit";

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

  router.post("/layouts", requirePermission("layouts.create"), async (req, res) => {
    const body = parseWith(createLayoutBodySchema, req.body);
    const reply: LayoutResponse = { layout: await createLayout(deps, body, req.user!.id) };
    res.status(201).json(reply);
  });

  router.put("/layouts/:slug", requirePermission("layouts.edit"), async (req, res) => {
    const reply: LayoutResponse = { layout: await saveLayout(deps, String(req.params.slug), req.body, req.user!.id) };
    res.json(reply);
  });

  router.post("/layouts/:slug/archive", requirePermission("layouts.archive"), async (req, res) => {
    res.json(await setArchived(deps, String(req.params.slug), true, req.user!.id));
  });

  router.post("/layouts/:slug/restore", requirePermission("layouts.archive"), async (req, res) => {
    res.json(await setArchived(deps, String(req.params.slug), false, req.user!.id));
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
