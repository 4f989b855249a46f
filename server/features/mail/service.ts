/**
 * Outgoing mail. With SMTP_URL set, nodemailer sends through that server and every message
 * is also kept in `mail_outbox` with its delivery result. Without it, a local fake SMTP
 * server (smtp-server on a free loopback port) receives the mail and stores it in
 * `mail_outbox`, where admins read it (/admin/outbox): nothing leaves the machine.
 */
import type { AddressInfo } from "node:net";
import nodemailer, { type Transporter } from "nodemailer";
import { QueryTypes } from "sequelize";
import { SMTPServer } from "smtp-server";
import type { AppDeps, MailMessage, Mailer } from "../../deps";
import { parseMessage } from "./parse";

export const MAIL_FROM = "Blocklight <blocklight@localhost>";
/** Largest message the fake server accepts. */
const FAKE_SMTP_MAX_BYTES = 1024 * 1024;

export type { MailMessage, Mailer };

async function insertOutbox(deps: AppDeps, row: { to: string; subject: string; text: string; sent: boolean; error?: string | null }): Promise<number> {
  const rows = await deps.db.sequelize.query<{ id: number }>(
    `INSERT INTO mail_outbox (to_address, subject, body_text, sent_at, error) VALUES (:to, :subject, :text, ${row.sent ? "now()" : "NULL"}, :error) RETURNING id`,
    { replacements: { to: row.to, subject: row.subject, text: row.text, error: row.error ?? null }, type: QueryTypes.SELECT },
  );
  return rows[0].id;
}

/** Starts the mailer for this process: a real SMTP transport, or the local fake server. */
export async function startMailer(deps: AppDeps): Promise<Mailer> {
  if (deps.config.smtpUrl) return smtpMailer(deps, deps.config.smtpUrl);
  return fakeSmtpMailer(deps);
}

function smtpMailer(deps: AppDeps, url: string): Mailer {
  const transport: Transporter = nodemailer.createTransport(url);
  return {
    async send(message) {
      const id = await insertOutbox(deps, { ...message, sent: false });
      try {
        await transport.sendMail({ from: MAIL_FROM, to: message.to, subject: message.subject, text: message.text });
        await deps.db.sequelize.query(`UPDATE mail_outbox SET sent_at = now() WHERE id = :id`, { replacements: { id } });
      } catch (err) {
        const error = err instanceof Error ? err.message : String(err);
        await deps.db.sequelize.query(`UPDATE mail_outbox SET error = :error WHERE id = :id`, { replacements: { id, error } });
        deps.logger.warn({ err: error, to: message.to }, "mail could not be sent");
      }
    },
    async close() {
      transport.close();
    },
    describe: () => url.replace(/\/\/([^:@/]+):[^@/]*@/, "//$1:***@"),
  };
}

async function fakeSmtpMailer(deps: AppDeps): Promise<Mailer> {
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ["STARTTLS"],
    size: FAKE_SMTP_MAX_BYTES,
    logger: false,
    onData(stream, session, callback) {
      const chunks: Buffer[] = [];
      stream.on("data", (chunk: Buffer) => chunks.push(chunk));
      stream.on("end", () => {
        const parsed = parseMessage(Buffer.concat(chunks).toString("utf8"));
        const recipients = session.envelope.rcptTo.map((r) => r.address);
        Promise.all(recipients.map((to) => insertOutbox(deps, { to, subject: parsed.subject, text: parsed.text, sent: true })))
          .then(() => callback())
          .catch((err: Error) => callback(err));
      });
    },
  });
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(0, "127.0.0.1", () => resolve());
  });
  server.on("error", (err) => deps.logger.warn({ err }, "fake SMTP server error"));
  const port = (server.server.address() as AddressInfo).port;
  const transport = nodemailer.createTransport({ host: "127.0.0.1", port, secure: false, ignoreTLS: true });
  return {
    async send(message) {
      try {
        await transport.sendMail({ from: MAIL_FROM, to: message.to, subject: message.subject, text: message.text });
      } catch (err) {
        const error = err instanceof Error ? err.message : String(err);
        await insertOutbox(deps, { ...message, sent: false, error });
      }
    },
    async close() {
      transport.close();
      await new Promise<void>((resolve) => server.close(() => resolve()));
    },
    describe: () => `local fake SMTP server on 127.0.0.1:${port} (mail kept in the outbox)`,
  };
}

/** The process's mailer, or one that only records mail in the outbox (tests without mail). */
export function mailerOf(deps: AppDeps): Mailer {
  return (
    deps.mail ?? {
      send: async (message) => void (await insertOutbox(deps, { ...message, sent: false, error: "no mailer running in this process" })),
      close: async () => {},
      describe: () => "outbox only",
    }
  );
}

/** The address people reach the app at, for links in mail. */
export function appBaseUrl(deps: AppDeps): string {
  return `http://${deps.config.host}:${deps.config.port}`;
}
