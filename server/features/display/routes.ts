import { Router } from "express";
import type { DisplayResponse } from "@shared/contract/controlRoom";
import type { AppDeps } from "../../deps";
import { allowAnyone } from "../auth/middleware";
import { HttpError } from "../../http/errors";
import { layoutDetail, findLayout, liveRulebookVersion } from "../../data/layouts";
import { layoutOfDisplayToken } from "../live/displayLinks";

/**
 * What a display link opens: the drawing of the layout, nothing about people or nodes.
 * Anyone holding a live (not revoked) token may ask.
 */
export function displayRoutes(deps: AppDeps): Router {
  const router = Router();
  router.get("/display/:token", allowAnyone("the display token"), async (req, res) => {
    const link = await layoutOfDisplayToken(deps, String(req.params.token));
    if (!link) throw new HttpError(404, "not_found", "this display link is not valid");
    const detail = await layoutDetail(deps, link.slug);
    const version = await liveRulebookVersion(deps, await findLayout(deps, link.slug));
    const body: DisplayResponse = {
      layout: {
        slug: detail.slug,
        name: detail.name,
        lines: detail.lines,
        detectors: detail.detectors,
        signals: detail.signals,
        points: detail.points,
        schematic: detail.schematic,
        routes: version?.rulebook.proving?.routes ?? [],
      },
    };
    res.setHeader("Cache-Control", "no-store");
    res.json(body);
  });
  return router;
}
