import { Router } from "express";
import { z } from "zod";
import type { AppDeps } from "../../deps";
import { parseWith } from "../../http/errors";
import { requirePermission, requireSignedIn } from "../auth/middleware";
import { findLayout, refuseIfArchived } from "../../data/layouts";
import { alarmSettingsPatchSchema } from "@shared/contract/alarmSettings";
import { acknowledgeAlarm, listAlarms } from "./service";
import { describeAlarmSettings, updateAlarmSettings } from "./settings";

const listQuerySchema = z.object({ state: z.enum(["open", "all"]).default("open") });
const acknowledgeBodySchema = z.strictObject({ comment: z.string().trim().max(1000).optional() });

export function alarmRoutes(deps: AppDeps): Router {
  const router = Router();

  router.get("/layouts/:slug/alarms", requireSignedIn, async (req, res) => {
    const { state } = parseWith(listQuerySchema, req.query, "query");
    const layout = await findLayout(deps, String(req.params.slug));
    res.json({ alarms: await listAlarms(deps, layout.id, state) });
  });

  router.post("/alarms/:id/acknowledge", requirePermission("alarms.acknowledge"), async (req, res) => {
    const id = parseWith(z.coerce.number().int().positive(), req.params.id, "alarm id");
    const { comment } = parseWith(acknowledgeBodySchema, req.body ?? {});
    res.json({ alarm: await acknowledgeAlarm(deps, id, req.user!.id, comment || null) });
  });

  router.get("/layouts/:slug/alarm-settings", requireSignedIn, async (req, res) => {
    const layout = await findLayout(deps, String(req.params.slug));
    res.json(await describeAlarmSettings(deps, layout.id));
  });

  router.put("/layouts/:slug/alarm-settings", requirePermission("alarm-settings.edit"), async (req, res) => {
    const patch = parseWith(alarmSettingsPatchSchema, req.body ?? {});
    const layout = await findLayout(deps, String(req.params.slug));
    refuseIfArchived(layout);
    res.json(await updateAlarmSettings(deps, layout, patch, req.user!));
  });

  return router;
}
