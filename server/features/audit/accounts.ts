/**
 * Account changes (setup, members, invitations, passwords) go to the same audit table as
 * layout actions, with no layout: admins read them on the members page.
 */
import { QueryTypes, type Transaction } from "sequelize";
import type { AccountAuditResponse } from "@shared/contract/accounts";
import type { AppDeps } from "../../deps";

const ACCOUNT_AUDIT_LIMIT = 200;

export interface AccountAuditInput {
  /** Who did it. */
  userId: number | null;
  action: string;
  /** Whom or what it was done to, in words (an e-mail address). */
  target: string | null;
  before?: unknown;
  after?: unknown;
}

export async function auditAccount(deps: Pick<AppDeps, "db">, entry: AccountAuditInput, transaction?: Transaction): Promise<void> {
  await deps.db.models.AuditEntry.create(
    { layoutId: null, userId: entry.userId, action: entry.action, target: entry.target, reason: null, before: entry.before ?? null, after: entry.after ?? null },
    { transaction },
  );
}

export async function listAccountAudit(deps: AppDeps): Promise<AccountAuditResponse> {
  const rows = await deps.db.sequelize.query<{ id: number; at: Date; user: string | null; action: string; target: string | null; before: unknown; after: unknown }>(
    `SELECT a.id, a.at, u.name AS "user", a.action, a.target, a.before, a.after
       FROM audit_entries a LEFT JOIN users u ON u.id = a.user_id
      WHERE a.layout_id IS NULL ORDER BY a.at DESC, a.id DESC LIMIT ${ACCOUNT_AUDIT_LIMIT}`,
    { type: QueryTypes.SELECT },
  );
  return { entries: rows.map((r) => ({ ...r, at: new Date(r.at).toISOString() })) };
}
