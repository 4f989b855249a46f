import { Router } from "express";
import { QueryTypes } from "sequelize";
import type { AuditResponse } from "@shared/contract/controlRoom";
import type { AppDeps } from "../../deps";
import { requirePermission, requireSignedIn } from "../auth/middleware";
import { listAccountAudit } from "./accounts";
import { findLayout } from "../../data/layouts";

const AUDIT_LIMIT = 500;

/** The audit trail of a layout: signaller commands, acknowledgements, display links. */
export function auditRoutes(deps: AppDeps): Router {
  const router = Router();
  router.get("/layouts/:slug/audit", requireSignedIn, async (req, res) => {
    const layout = await findLayout(deps, String(req.params.slug));
    const rows = await deps.db.sequelize.query<{ id: number; at: Date; user: string | null; action: string; target: string | null; reason: string | null; before: unknown; after: unknown }>(
      `SELECT a.id, a.at, u.name AS "user", a.action, a.target, a.reason, a.before, a.after
         FROM audit_entries a LEFT JOIN users u ON u.id = a.user_id
        WHERE a.layout_id = :layoutId ORDER BY a.at DESC, a.id DESC LIMIT ${AUDIT_LIMIT}`,
      { replacements: { layoutId: layout.id }, type: QueryTypes.SELECT },
    );
    const body: AuditResponse = { entries: rows.map((r) => ({ ...r, at: new Date(r.at).toISOString() })) };
    res.json(body);
  });
  // Account changes: setup, members, invitations, passwords (no layout).
  router.get("/admin/audit", requirePermission("members.manage"), async (_req, res) => {
    res.json(await listAccountAudit(deps));
  });
  return router;
}
