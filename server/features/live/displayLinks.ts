/**
 * Display links: a revocable token that opens a layout's read-only mimic without an account.
 * Only the sha256 of the token is stored; the token is shown once, when the link is made.
 */
import { createHash, randomBytes } from "node:crypto";
import { QueryTypes } from "sequelize";
import type { AppDeps } from "../../deps";
import { notFound } from "../../http/errors";

const TOKEN_BYTES = 24;

export const hashToken = (token: string) => createHash("sha256").update(token, "utf8").digest("hex");

export interface DisplayLinkDto {
  id: number;
  label: string | null;
  createdAt: string;
  createdBy: string | null;
  revokedAt: string | null;
  /** The first characters of the token's hash, to tell links apart. */
  hint: string;
}

export async function createDisplayLink(deps: AppDeps, layoutId: number, userId: number, label: string | null): Promise<{ token: string; url: string; id: number }> {
  const token = randomBytes(TOKEN_BYTES).toString("base64url");
  const rows = await deps.db.sequelize.query<{ id: number }>(
    `INSERT INTO display_links (layout_id, token_hash, label, created_by) VALUES (:layoutId, :hash, :label, :userId) RETURNING id`,
    { replacements: { layoutId, hash: hashToken(token), label, userId }, type: QueryTypes.SELECT },
  );
  return { token, url: `/display/${token}`, id: rows[0].id };
}

export async function listDisplayLinks(deps: AppDeps, layoutId: number): Promise<DisplayLinkDto[]> {
  const rows = await deps.db.sequelize.query<{ id: number; label: string | null; created_at: Date; created_by: string | null; revoked_at: Date | null; token_hash: string }>(
    `SELECT d.id, d.label, d.created_at, u.name AS created_by, d.revoked_at, d.token_hash
       FROM display_links d LEFT JOIN users u ON u.id = d.created_by WHERE d.layout_id = :layoutId ORDER BY d.id DESC`,
    { replacements: { layoutId }, type: QueryTypes.SELECT },
  );
  return rows.map((r) => ({
    id: r.id,
    label: r.label,
    createdAt: new Date(r.created_at).toISOString(),
    createdBy: r.created_by,
    revokedAt: r.revoked_at ? new Date(r.revoked_at).toISOString() : null,
    hint: r.token_hash.slice(0, 8),
  }));
}

/**
 * Revokes a link named by its token (or, since the token is shown only once, by its numeric
 * id from the list). Sockets that joined with it are disconnected.
 */
export async function revokeDisplayLink(deps: AppDeps, layoutId: number, tokenOrId: string, userId: number): Promise<void> {
  const byId = /^\d{1,9}$/.test(tokenOrId);
  const rows = await deps.db.sequelize.query<{ id: number; token_hash: string }>(
    `UPDATE display_links SET revoked_at = COALESCE(revoked_at, now())
      WHERE layout_id = :layoutId AND ${byId ? "id = :id" : "token_hash = :hash"} RETURNING id, token_hash`,
    { replacements: { layoutId, id: byId ? Number(tokenOrId) : 0, hash: hashToken(tokenOrId) }, type: QueryTypes.SELECT },
  );
  if (!rows[0]) throw notFound("display link");
  await deps.db.models.AuditEntry.create({
    layoutId,
    userId,
    action: "revoke-display-link",
    target: `display link ${rows[0].id}`,
    reason: null,
    before: null,
    after: { revoked: true },
  });
  deps.bus.emit("display-link.revoked", { layoutId, tokenHash: rows[0].token_hash });
}

/** The layout a live (not revoked) display token opens, or null. */
export async function layoutOfDisplayToken(deps: AppDeps, token: string): Promise<{ layoutId: number; slug: string; tokenHash: string } | null> {
  if (!token || token.length > 200) return null;
  const tokenHash = hashToken(token);
  const rows = await deps.db.sequelize.query<{ layout_id: number; slug: string }>(
    `SELECT d.layout_id, l.slug FROM display_links d JOIN layouts l ON l.id = d.layout_id WHERE d.token_hash = :tokenHash AND d.revoked_at IS NULL`,
    { replacements: { tokenHash }, type: QueryTypes.SELECT },
  );
  return rows[0] ? { layoutId: rows[0].layout_id, slug: rows[0].slug, tokenHash } : null;
}
