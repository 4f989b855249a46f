/**
 * E-mails every member who asked for it (users.alarm_mail, chosen on the account page or by
 * an admin) when an alarm is raised.
 */
import { QueryTypes } from "sequelize";
import type { AlarmDto } from "@shared/contract/live";
import type { AppDeps } from "../../deps";
import { mailSignature } from "../setup/society";
import { appBaseUrl, mailerOf } from "./service";

export function startAlarmMail(deps: AppDeps): { stop(): void } {
  const onAlarm = (alarm: AlarmDto & { slug: string; layoutId: number; created?: boolean }) => {
    // Raised = neither acknowledged nor cleared; the same event also announces those later.
    if (alarm.acknowledgedAt !== null || alarm.clearedAt !== null) return;
    // Grouped alarms: a repeat of an open alarm (its count going up) is not news for the inbox.
    if (!alarm.created) return;
    void sendAlarmMail(deps, alarm).catch((err) => deps.logger.warn({ err }, "alarm mail failed"));
  };
  deps.bus.on("alarm.changed", onAlarm, "alarm-mail");
  return { stop: () => deps.bus.off("alarm.changed", onAlarm) };
}

export async function sendAlarmMail(deps: AppDeps, alarm: AlarmDto & { slug: string }): Promise<number> {
  const rows = await deps.db.sequelize.query<{ email: string; name: string; layout: string }>(
    `SELECT u.email, u.name, (SELECT name FROM layouts WHERE slug = :slug) AS layout
       FROM users u WHERE u.alarm_mail ORDER BY u.id`,
    { replacements: { slug: alarm.slug }, type: QueryTypes.SELECT },
  );
  const mailer = mailerOf(deps);
  const signature = rows.length ? await mailSignature(deps) : "Blocklight";
  for (const row of rows) {
    await mailer.send({
      to: row.email,
      subject: `[${signature}] ${row.layout ?? alarm.slug}: ${alarm.kind} alarm${alarm.subject ? ` (${alarm.subject})` : ""}`,
      text: [
        `Hello ${row.name},`,
        "",
        `An alarm was raised on ${row.layout ?? alarm.slug} at ${alarm.raisedAt}:`,
        "",
        `  ${alarm.message}`,
        "",
        `See and acknowledge it here: ${appBaseUrl(deps)}/layouts/${alarm.slug}/alarms`,
        "",
        "Blocklight is an operating aid, not a certified interlocking: follow your society's rules.",
        "You get this mail because alarm mail is on for your account (turn it off on your account page).",
        "",
        signature,
      ].join("\n"),
    });
  }
  return rows.length;
}
