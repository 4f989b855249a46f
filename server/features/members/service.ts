/**
 * Members and invitations: an admin invites by e-mail; the invitee follows the link, gives a
 * name and password, and becomes a member with the invited role. Tokens are stored as sha256.
 * Admins change roles and alarm mail, remove members, revoke and resend invitations; the
 * last admin can be neither demoted nor removed. Every change is audited.
 */
import { randomBytes } from "node:crypto";
import type { Transaction } from "sequelize";
import type { UpdateMemberBody } from "@shared/contract/accounts";
import type { AcceptInvitationBody, InvitationBody, InvitationPreview, MemberDto, MembersResponse } from "@shared/contract/controlRoom";
import type { Invitation, User } from "../../db/models";
import { nowMs, type AppDeps } from "../../deps";
import { conflict, HttpError, notFound } from "../../http/errors";
import { auditAccount } from "../audit/accounts";
import { announceSessionsEnded, hashSecret, hashToken } from "../auth/service";
import { appBaseUrl, mailerOf } from "../mail/service";
import { mailSignature, societyName } from "../setup/society";
import { ROLE_WORDS } from "./words";

export const INVITATION_TTL_MS = 7 * 24 * 60 * 60_000;
const TOKEN_BYTES = 24;

export interface Actor {
  id: number;
  name: string;
}

const memberDto = (u: User): MemberDto => ({ id: u.id, email: u.email, name: u.name, role: u.role, alarmMail: u.alarmMail });

async function mailInvitation(deps: AppDeps, invitation: { email: string; role: InvitationBody["role"]; expiresAt: Date }, token: string, invitedBy: Actor): Promise<void> {
  const society = await societyName(deps);
  const signature = await mailSignature(deps);
  await mailerOf(deps).send({
    to: invitation.email,
    subject: `[${signature}] You are invited to join ${society ?? "your society"}'s signalling`,
    text: [
      "Hello,",
      "",
      `${invitedBy.name} has invited you to ${society ? `${society} on ` : ""}Blocklight as ${ROLE_WORDS[invitation.role]}.`,
      `Accept the invitation and choose a password here (the link works until ${invitation.expiresAt.toISOString().slice(0, 16).replace("T", " ")} UTC):`,
      "",
      `  ${appBaseUrl(deps)}/invite/${token}`,
      "",
      "If you did not expect this, ignore this mail.",
      "",
      signature,
    ].join("\n"),
  });
}

export async function inviteMember(deps: AppDeps, body: InvitationBody, invitedBy: Actor): Promise<{ id: number }> {
  const { User, Invitation } = deps.db.models;
  if (await User.findOne({ where: { email: body.email } })) throw conflict("someone with that e-mail address is a member already");
  const token = randomBytes(TOKEN_BYTES).toString("base64url");
  const now = nowMs(deps);
  const expiresAt = new Date(now + INVITATION_TTL_MS);
  const invitation = await deps.db.sequelize.transaction(async (transaction) => {
    // A second invitation to the same address replaces the first: its link stops working.
    const [replaced] = await Invitation.update({ revokedAt: new Date(now) }, { where: { email: body.email, acceptedAt: null, revokedAt: null }, transaction });
    const row = await Invitation.create({ email: body.email, role: body.role, tokenHash: hashToken(token), invitedBy: invitedBy.id, expiresAt }, { transaction });
    await auditAccount(deps, { userId: invitedBy.id, action: "invitation.send", target: body.email, after: { role: body.role, replaced } }, transaction);
    return row;
  });
  await mailInvitation(deps, { email: body.email, role: body.role, expiresAt }, token, invitedBy);
  return { id: invitation.id };
}

async function openInvitationById(deps: AppDeps, id: number, transaction: Transaction): Promise<Invitation> {
  const row = await deps.db.models.Invitation.findByPk(id, { lock: transaction.LOCK.UPDATE, transaction });
  if (!row) throw notFound("invitation");
  if (row.acceptedAt) throw conflict(`${row.email} has accepted this invitation already`);
  if (row.revokedAt) throw conflict("this invitation was revoked or replaced: send a new one");
  return row;
}

/** A fresh link and a fresh week for an open (or expired) invitation; the old link stops working. */
export async function resendInvitation(deps: AppDeps, id: number, actor: Actor): Promise<{ id: number }> {
  const token = randomBytes(TOKEN_BYTES).toString("base64url");
  const expiresAt = new Date(nowMs(deps) + INVITATION_TTL_MS);
  const row = await deps.db.sequelize.transaction(async (transaction) => {
    const invitation = await openInvitationById(deps, id, transaction);
    invitation.tokenHash = hashToken(token);
    invitation.expiresAt = expiresAt;
    await invitation.save({ transaction });
    await auditAccount(deps, { userId: actor.id, action: "invitation.resend", target: invitation.email, after: { role: invitation.role } }, transaction);
    return invitation;
  });
  await mailInvitation(deps, { email: row.email, role: row.role, expiresAt }, token, actor);
  return { id: row.id };
}

export async function revokeInvitation(deps: AppDeps, id: number, actor: Actor): Promise<void> {
  await deps.db.sequelize.transaction(async (transaction) => {
    const invitation = await openInvitationById(deps, id, transaction);
    invitation.revokedAt = new Date(nowMs(deps));
    await invitation.save({ transaction });
    await auditAccount(deps, { userId: actor.id, action: "invitation.revoke", target: invitation.email, before: { role: invitation.role } }, transaction);
  });
}

async function openInvitation(deps: AppDeps, token: string, transaction?: Transaction): Promise<Invitation> {
  const row = await deps.db.models.Invitation.findOne({ where: { tokenHash: hashToken(token) }, transaction, ...(transaction ? { lock: transaction.LOCK.UPDATE } : {}) });
  if (!row || row.acceptedAt || row.revokedAt || row.expiresAt.getTime() < nowMs(deps)) {
    throw new HttpError(404, "not_found", "this invitation is not valid (unknown, used, revoked or expired)");
  }
  return row;
}

export async function previewInvitation(deps: AppDeps, token: string): Promise<InvitationPreview> {
  const row = await openInvitation(deps, token);
  return { email: row.email, role: row.role, expiresAt: row.expiresAt.toISOString() };
}

export async function acceptInvitation(deps: AppDeps, token: string, body: AcceptInvitationBody): Promise<{ email: string }> {
  const passwordHash = await hashSecret(body.password);
  return deps.db.sequelize.transaction(async (transaction) => {
    // The row lock makes a second, concurrent accept wait and then find it used.
    const row = await openInvitation(deps, token, transaction);
    if (await deps.db.models.User.findOne({ where: { email: row.email }, transaction })) throw conflict("someone with that e-mail address is a member already");
    row.acceptedAt = new Date(nowMs(deps));
    await row.save({ transaction });
    const user = await deps.db.models.User.create({ email: row.email, name: body.name, role: row.role, passwordHash }, { transaction });
    await auditAccount(deps, { userId: user.id, action: "invitation.accept", target: row.email, after: { name: body.name, role: row.role } }, transaction);
    return { email: row.email };
  });
}

export async function listMembers(deps: AppDeps): Promise<MembersResponse> {
  const users = await deps.db.models.User.findAll({ order: [["id", "ASC"]] });
  const invitations = await deps.db.models.Invitation.findAll({ order: [["id", "DESC"]], limit: 200 });
  const iso = (d: Date | null) => (d ? d.toISOString() : null);
  return {
    members: users.map(memberDto),
    invitations: invitations.map((i) => ({
      id: i.id,
      email: i.email,
      role: i.role,
      createdAt: i.createdAt.toISOString(),
      expiresAt: i.expiresAt.toISOString(),
      acceptedAt: iso(i.acceptedAt),
      revokedAt: iso(i.revokedAt),
    })),
  };
}

/**
 * Loads the member and every admin row, locked, so two admins demoting each other at the
 * same moment cannot leave the society with none.
 */
async function lockMemberAndAdmins(deps: AppDeps, id: number, transaction: Transaction): Promise<{ member: User; admins: User[] }> {
  const { User } = deps.db.models;
  const admins = await User.findAll({ where: { role: "admin" }, order: [["id", "ASC"]], lock: transaction.LOCK.UPDATE, transaction });
  const member = admins.find((a) => a.id === id) ?? (await User.findByPk(id, { lock: transaction.LOCK.UPDATE, transaction }));
  if (!member) throw notFound("member");
  return { member, admins };
}

const lastAdmin = (member: User, doing: string) =>
  new HttpError(409, "last_admin", `${member.name} is the society's last admin and cannot be ${doing}: make another member an admin first`);

export async function updateMember(deps: AppDeps, id: number, body: UpdateMemberBody, actor: Actor): Promise<MemberDto> {
  return deps.db.sequelize.transaction(async (transaction) => {
    const { member, admins } = await lockMemberAndAdmins(deps, id, transaction);
    if (body.role !== undefined && body.role !== "admin" && member.role === "admin" && admins.length <= 1) throw lastAdmin(member, "demoted");
    const before = { role: member.role, alarmMail: member.alarmMail };
    if (body.role !== undefined) member.role = body.role;
    if (body.alarmMail !== undefined) member.alarmMail = body.alarmMail;
    member.updatedAt = new Date(nowMs(deps));
    await member.save({ transaction });
    const after = { role: member.role, alarmMail: member.alarmMail };
    await auditAccount(deps, { userId: actor.id, action: "member.update", target: member.email, before, after }, transaction);
    return memberDto(member);
  });
}

/** Removes the account; its sessions go with it (ON DELETE CASCADE), so its cookies stop at once. */
export async function removeMember(deps: AppDeps, id: number, actor: Actor): Promise<void> {
  await deps.db.sequelize.transaction(async (transaction) => {
    const { member, admins } = await lockMemberAndAdmins(deps, id, transaction);
    if (member.role === "admin" && admins.length <= 1) throw lastAdmin(member, "removed");
    // The audit keeps who it was: the member's own earlier entries lose the name with the row.
    await auditAccount(deps, { userId: actor.id === id ? null : actor.id, action: "member.remove", target: member.email, before: { name: member.name, role: member.role } }, transaction);
    await member.destroy({ transaction });
    announceSessionsEnded(deps, { userId: id }, transaction);
  });
}

