/**
 * Members and invitations: an admin invites by e-mail; the invitee follows the link, gives a
 * name and password, and becomes a member with the invited role. Tokens are stored as sha256.
 */
import { createHash, randomBytes } from "node:crypto";
import { QueryTypes } from "sequelize";
import type { AcceptInvitationBody, InvitationBody, InvitationPreview, MembersResponse } from "../../../shared/contract/controlRoom";
import type { Role } from "../../../shared/contract/rest";
import type { AppDeps } from "../../deps";
import { conflict, HttpError } from "../../http/errors";
import { hashSecret } from "../auth/service";
import { appBaseUrl, mailerOf } from "../mail/service";

export const INVITATION_TTL_MS = 7 * 24 * 60 * 60_000;
const TOKEN_BYTES = 24;
const hashToken = (token: string) => createHash("sha256").update(token, "utf8").digest("hex");

export async function inviteMember(deps: AppDeps, body: InvitationBody, invitedBy: { id: number; name: string }): Promise<{ id: number }> {
  if (await deps.db.models.User.findOne({ where: { email: body.email } })) throw conflict("someone with that e-mail address is a member already");
  const token = randomBytes(TOKEN_BYTES).toString("base64url");
  const expiresAt = new Date(Date.now() + INVITATION_TTL_MS);
  const rows = await deps.db.sequelize.query<{ id: number }>(
    `INSERT INTO invitations (email, role, token_hash, invited_by, expires_at) VALUES (:email, :role, :hash, :by, :expiresAt) RETURNING id`,
    { replacements: { email: body.email, role: body.role, hash: hashToken(token), by: invitedBy.id, expiresAt }, type: QueryTypes.SELECT },
  );
  await mailerOf(deps).send({
    to: body.email,
    subject: "[Blocklight] You are invited to join your society's signalling",
    text: [
      "Hello,",
      "",
      `${invitedBy.name} has invited you to Blocklight as ${body.role}.`,
      `Accept the invitation and choose a password here (the link works until ${expiresAt.toISOString().slice(0, 16).replace("T", " ")} UTC):`,
      "",
      `  ${appBaseUrl(deps)}/invite/${token}`,
      "",
      "If you did not expect this, ignore this mail.",
    ].join("\n"),
  });
  return { id: rows[0].id };
}

interface InvitationRow {
  id: number;
  email: string;
  role: Role;
  expires_at: Date;
  accepted_at: Date | null;
}

async function openInvitation(deps: AppDeps, token: string): Promise<InvitationRow> {
  const rows = await deps.db.sequelize.query<InvitationRow>(`SELECT id, email, role, expires_at, accepted_at FROM invitations WHERE token_hash = :hash`, {
    replacements: { hash: hashToken(token) },
    type: QueryTypes.SELECT,
  });
  const row = rows[0];
  if (!row || row.accepted_at || new Date(row.expires_at).getTime() < Date.now()) throw new HttpError(404, "not_found", "this invitation is not valid (unknown, used or expired)");
  return row;
}

export async function previewInvitation(deps: AppDeps, token: string): Promise<InvitationPreview> {
  const row = await openInvitation(deps, token);
  return { email: row.email, role: row.role, expiresAt: new Date(row.expires_at).toISOString() };
}

export async function acceptInvitation(deps: AppDeps, token: string, body: AcceptInvitationBody): Promise<{ email: string }> {
  const row = await openInvitation(deps, token);
  const passwordHash = await hashSecret(body.password);
  await deps.db.sequelize.transaction(async (transaction) => {
    // Marking it accepted first makes a second, concurrent accept find nothing to accept.
    const [, updated] = await deps.db.sequelize.query(`UPDATE invitations SET accepted_at = now() WHERE id = :id AND accepted_at IS NULL`, { replacements: { id: row.id }, transaction });
    if (!updated) throw conflict("this invitation has just been used");
    if (await deps.db.models.User.findOne({ where: { email: row.email }, transaction })) throw conflict("someone with that e-mail address is a member already");
    await deps.db.models.User.create({ email: row.email, name: body.name, role: row.role, passwordHash }, { transaction });
  });
  return { email: row.email };
}

export async function listMembers(deps: AppDeps): Promise<MembersResponse> {
  const users = await deps.db.models.User.findAll({ order: [["id", "ASC"]] });
  const invitations = await deps.db.sequelize.query<InvitationRow & { created_at: Date }>(
    `SELECT id, email, role, created_at, expires_at, accepted_at FROM invitations ORDER BY id DESC LIMIT 200`,
    { type: QueryTypes.SELECT },
  );
  return {
    members: users.map((u) => ({ id: u.id, email: u.email, name: u.name, role: u.role, alarmMail: u.alarmMail })),
    invitations: invitations.map((i) => ({
      id: i.id,
      email: i.email,
      role: i.role,
      createdAt: new Date(i.created_at).toISOString(),
      expiresAt: new Date(i.expires_at).toISOString(),
      acceptedAt: i.accepted_at ? new Date(i.accepted_at).toISOString() : null,
    })),
  };
}
