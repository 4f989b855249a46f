import { Router } from "express";
import { QueryTypes } from "sequelize";
import type { OutboxResponse } from "@shared/contract/controlRoom";
import type { AppDeps } from "../../deps";
import { requirePermission } from "../auth/middleware";

const OUTBOX_LIMIT = 200;

export function mailRoutes(deps: AppDeps): Router {
  const router = Router();
  router.get("/admin/outbox", requirePermission("outbox.read"), async (_req, res) => {
    const rows = await deps.db.sequelize.query<{ id: number; to_address: string; subject: string; body_text: string; created_at: Date; sent_at: Date | null; error: string | null }>(
      `SELECT id, to_address, subject, body_text, created_at, sent_at, error FROM mail_outbox ORDER BY id DESC LIMIT ${OUTBOX_LIMIT}`,
      { type: QueryTypes.SELECT },
    );
    const body: OutboxResponse = {
      messages: rows.map((r) => ({
        id: r.id,
        to: r.to_address,
        subject: r.subject,
        body: r.body_text,
        createdAt: new Date(r.created_at).toISOString(),
        sentAt: r.sent_at ? new Date(r.sent_at).toISOString() : null,
        error: r.error,
      })),
    };
    res.json(body);
  });
  return router;
}
