import { Router } from "express";
import { z } from "zod";
import { updateMemberBodySchema } from "@shared/contract/accounts";
import { acceptInvitationBodySchema, invitationBodySchema } from "@shared/contract/controlRoom";
import type { AppDeps } from "../../deps";
import { attemptLimiter } from "../../http/attemptLimiter";
import { parseWith } from "../../http/errors";
import { allowAnyone, requirePermission } from "../auth/middleware";
import { acceptInvitation, inviteMember, listMembers, previewInvitation, removeMember, resendInvitation, revokeInvitation, updateMember } from "./service";

const idParamsSchema = z.object({ id: z.coerce.number().int().min(1).max(2_147_483_647) });

export function memberRoutes(deps: AppDeps): Router {
  const router = Router();
  // Invitation tokens are guessable only by trying: previews and accepts are limited per address.
  const previewLimiter = attemptLimiter(deps, "invitation look-ups");
  const invitationLimiter = attemptLimiter(deps, "invitation attempts");
  const actorOf = (req: { user?: { id: number; name: string } }) => ({ id: req.user!.id, name: req.user!.name });
  const idOf = (params: unknown) => parseWith(idParamsSchema, params, "path").id;

  router.get("/admin/members", requirePermission("members.manage"), async (_req, res) => {
    res.json(await listMembers(deps));
  });

  router.patch("/admin/members/:id", requirePermission("members.manage"), async (req, res) => {
    const id = idOf(req.params);
    const body = parseWith(updateMemberBodySchema, req.body);
    res.json({ member: await updateMember(deps, id, body, actorOf(req)) });
  });

  router.delete("/admin/members/:id", requirePermission("members.manage"), async (req, res) => {
    await removeMember(deps, idOf(req.params), actorOf(req));
    res.status(204).end();
  });

  router.post("/invitations", requirePermission("members.manage"), async (req, res) => {
    const body = parseWith(invitationBodySchema, req.body);
    res.status(201).json(await inviteMember(deps, body, actorOf(req)));
  });

  router.post("/admin/invitations/:id/resend", requirePermission("members.manage"), async (req, res) => {
    res.json(await resendInvitation(deps, idOf(req.params), actorOf(req)));
  });

  router.delete("/admin/invitations/:id", requirePermission("members.manage"), async (req, res) => {
    await revokeInvitation(deps, idOf(req.params), actorOf(req));
    res.status(204).end();
  });

  // The invitee has no account yet: the token is the authority.
  router.get("/invitations/:token", allowAnyone("the invitation token"), previewLimiter, async (req, res) => {
    res.json(await previewInvitation(deps, String(req.params.token)));
  });

  router.post("/invitations/:token/accept", allowAnyone("the invitation token"), invitationLimiter, async (req, res) => {
    const body = parseWith(acceptInvitationBodySchema, req.body);
    res.status(201).json(await acceptInvitation(deps, String(req.params.token), body));
  });

  return router;
}
