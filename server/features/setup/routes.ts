import { Router } from "express";
import { setupBodySchema, societyBodySchema, type SetupStatus, type SocietyResponse } from "@shared/contract/accounts";
import type { AppDeps } from "../../deps";
import { attemptLimiter } from "../../http/attemptLimiter";
import { parseWith } from "../../http/errors";
import { auditAccount } from "../audit/accounts";
import { allowAnyone, requirePermission } from "../auth/middleware";
import { checkSetupToken, completeSetup, setupDone, setupNeeded } from "./service";
import { setSocietyName, societyName } from "./society";

export function setupRoutes(deps: AppDeps): Router {
  const router = Router();
  const setupLimiter = attemptLimiter(deps, "setup attempts");

  router.get("/setup", allowAnyone("nothing secret: whether setup is needed"), async (_req, res) => {
    const body: SetupStatus = { needed: await setupNeeded(deps) };
    res.json(body);
  });

  // Anyone may try; only the token holder gets past the check, and only once.
  router.post("/setup", allowAnyone("the setup token"), setupLimiter, async (req, res) => {
    if (!(await setupNeeded(deps))) throw setupDone();
    checkSetupToken(deps, (req.body as { token?: unknown } | undefined)?.token);
    const body = parseWith(setupBodySchema, req.body);
    await completeSetup(deps, body);
    res.status(201).json({ ok: true });
  });

  // The society's name is on the visitor display too, so it needs no sign-in.
  router.get("/society", allowAnyone("nothing secret: the society's name"), async (_req, res) => {
    const body: SocietyResponse = { name: await societyName(deps) };
    res.json(body);
  });

  router.patch("/society", requirePermission("members.manage"), async (req, res) => {
    const { name } = parseWith(societyBodySchema, req.body);
    const before = await societyName(deps);
    await deps.db.sequelize.transaction(async (transaction) => {
      await setSocietyName(deps, name, transaction);
      await auditAccount(deps, { userId: req.user!.id, action: "society.rename", target: name, before: { name: before }, after: { name } }, transaction);
    });
    const body: SocietyResponse = { name };
    res.json(body);
  });

  return router;
}
