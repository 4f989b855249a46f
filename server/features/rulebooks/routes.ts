import { Router } from "express";
import { z } from "zod";
import { publishBodySchema } from "@shared/contract/layoutEdit";
import { saveDraftBodySchema } from "@shared/contract/rest";
import type { AppDeps } from "../../deps";
import { parseWith } from "../../http/errors";
import { requirePermission, requireSignedIn } from "../auth/middleware";
import { publishVersion, readVersion, saveDraft } from "./service";

const versionParam = z.coerce.number().int().positive();

export function rulebookRoutes(deps: AppDeps): Router {
  const router = Router();

  router.get("/layouts/:slug/rulebooks/:version", requireSignedIn, async (req, res) => {
    const version = parseWith(versionParam, req.params.version, "version number");
    res.json({ version: await readVersion(deps, String(req.params.slug), version) });
  });

  router.post("/layouts/:slug/rulebooks", requirePermission("rulebooks.edit"), async (req, res) => {
    const body = parseWith(saveDraftBodySchema, req.body);
    const version = await saveDraft(deps, String(req.params.slug), body.rulebook, body.note, req.user!.id);
    res.status(201).json({ version });
  });

  router.post("/layouts/:slug/rulebooks/:version/publish", requirePermission("rulebooks.publish"), async (req, res) => {
    const version = parseWith(versionParam, req.params.version, "version number");
    const body = parseWith(publishBodySchema, req.body ?? {});
    await publishVersion(deps, String(req.params.slug), version, body, req.user!.id);
    res.json({ version });
  });

  return router;
}
