import { Router } from "express";
import { acceptInvitationBodySchema, invitationBodySchema } from "../../../shared/contract/controlRoom";
import type { AppDeps } from "../../deps";
import { parseWith } from "../../http/errors";
import { allowAnyone, requirePermission } from "../auth/middleware";
import { acceptInvitation, inviteMember, listMembers, previewInvitation } from "./service";

export function memberRoutes(deps: AppDeps): Router {
  const router = Router();

  router.get("/admin/members", requirePermission("members.manage"), async (_req, res) => {
    res.json(await listMembers(deps));
  });

  router.post("/invitations", requirePermission("members.manage"), async (req, res) => {
    const body = parseWith(invitationBodySchema, req.body);
    res.status(201).json(await inviteMember(deps, body, { id: req.user!.id, name: req.user!.name }));
  });

  // The invitee has no account yet: the token is the authority.
  router.get("/invitations/:token", allowAnyone("the invitation token"), async (req, res) => {
    res.json(await previewInvitation(deps, String(req.params.token)));
  });

  router.post("/invitations/:token/accept", allowAnyone("the invitation token"), async (req, res) => {
    const body = parseWith(acceptInvitationBodySchema, req.body);
    res.status(201).json(await acceptInvitation(deps, String(req.params.token), body));
  });

  return router;
}
