/**
 * The live control room over REST (CONTRACT.md §6): live state, signaller commands,
 * running sessions open/closed by hand, and display links.
 */
import { recordSessionControl } from "../sessions/service";
import { Router, type RequestHandler } from "express";
import { z } from "zod";
import { commandBodySchema } from "@shared/contract/live";
import type { AppDeps } from "../../deps";
import { HttpError, parseWith } from "../../http/errors";
import { LiveError } from "../../runtime/ports";
import { allowAnyone, requirePermission } from "../auth/middleware";
import { findLayout, refuseIfArchived } from "../../data/layouts";
import { redactStateForDisplay } from "../display/redact";
import { createDisplayLink, layoutOfDisplayToken, listDisplayLinks, revokeDisplayLink } from "./displayLinks";

const displayLinkBodySchema = z.strictObject({ label: z.string().trim().max(100).optional() });
const sessionBodySchema = z.strictObject({ action: z.enum(["open", "close"]), note: z.string().trim().max(500).optional() });

export function liveRoutes(deps: AppDeps): Router {
  const router = Router();
  const running = () => {
    if (!deps.live) throw new HttpError(503, "live_unavailable", "the live pipeline is not running");
    return deps.live;
  };
  /** The runtime's refusals (server/runtime/ports.ts) as REST errors. */
  const live = () => {
    const runtime = running();
    const wrap =
      <A extends unknown[], R>(fn: (...args: A) => Promise<R>) =>
      async (...args: A): Promise<R> => {
        try {
          return await fn(...args);
        } catch (err) {
          if (err instanceof LiveError) throw new HttpError(err.status, err.code, err.message, err.details);
          throw err;
        }
      };
    return { liveState: wrap(runtime.liveState), command: wrap(runtime.command), session: wrap(runtime.session) };
  };

  /** Signed in, or holding a live display link for this very layout. */
  const checkSignedInOrDisplay: RequestHandler = async (req, _res, next) => {
    try {
      if (req.user) return next();
      const token = typeof req.query.display === "string" ? req.query.display : "";
      if (!token) return next(new HttpError(401, "unauthenticated", "sign in first, or open a display link"));
      const link = await layoutOfDisplayToken(deps, token);
      if (!link || link.slug !== String(req.params.slug)) return next(new HttpError(401, "unauthenticated", "this display link is not valid"));
      next();
    } catch (err) {
      next(err);
    }
  };

  router.get("/layouts/:slug/live", allowAnyone("signed in, or holding a display token of this layout"), checkSignedInOrDisplay, async (req, res) => {
    const state = await live().liveState(String(req.params.slug));
    // A display link sees no people: no alarms (who acknowledged them), see display/redact.ts.
    res.json(req.user ? state : redactStateForDisplay(state));
  });

  router.post("/layouts/:slug/commands", requirePermission("live.control"), async (req, res) => {
    const body = parseWith(commandBodySchema, req.body);
    refuseIfArchived(await findLayout(deps, String(req.params.slug)));
    res.json(await live().command(String(req.params.slug), body, { id: req.user!.id, name: req.user!.name }));
  });

  router.post("/layouts/:slug/sessions", requirePermission("live.control"), async (req, res) => {
    const { action, note } = parseWith(sessionBodySchema, req.body);
    const slug = String(req.params.slug);
    refuseIfArchived(await findLayout(deps, slug));
    const before = action === "close" ? (await live().liveState(slug)).session : null;
    const state = await live().session(slug, action, { id: req.user!.id, name: req.user!.name });
    // Who ended it and the note are the sessions feature's; the runtime only opens and closes.
    await recordSessionControl(deps, action === "open" ? state.session?.id : before?.id, action, req.user!.id, note || null);
    res.json(state);
  });

  router.post("/layouts/:slug/display-links", requirePermission("display-links.manage"), async (req, res) => {
    const { label } = parseWith(displayLinkBodySchema, req.body ?? {});
    const layout = await findLayout(deps, String(req.params.slug));
    refuseIfArchived(layout);
    const { token, url } = await createDisplayLink(deps, layout.id, req.user!.id, label || null);
    res.status(201).json({ token, url });
  });

  router.get("/layouts/:slug/display-links", requirePermission("display-links.manage"), async (req, res) => {
    const layout = await findLayout(deps, String(req.params.slug));
    res.json({ links: await listDisplayLinks(deps, layout.id) });
  });

  router.delete("/layouts/:slug/display-links/:token", requirePermission("display-links.manage"), async (req, res) => {
    const layout = await findLayout(deps, String(req.params.slug));
    await revokeDisplayLink(deps, layout.id, String(req.params.token), req.user!.id);
    res.status(204).end();
  });

  return router;
}
