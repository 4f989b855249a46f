/**
 * Password reset by e-mail: a single-use link, valid for an hour, its token stored as
 * sha256. Asking always answers 202 at once and does the work afterwards, so neither the
 * reply nor its timing says whether an address belongs to a member.
 */
import { randomBytes } from "node:crypto";
import { Op } from "sequelize";
import { nowMs, type AppDeps } from "../../deps";
import { HttpError } from "../../http/errors";
import { auditAccount } from "../audit/accounts";
import { appBaseUrl, mailerOf } from "../mail/service";
import { mailSignature } from "../setup/society";
import { endSessionsOf, hashSecret, hashToken } from "./service";

export const RESET_TTL_MS = 60 * 60_000;
/** More than this many reset mails to one address in an hour are not sent (the reply is still 202). */
export const RESET_MAILS_PER_ADDRESS_PER_HOUR = 3;
const RESET_TOKEN_BYTES = 24;

export async function requestPasswordReset(deps: AppDeps, email: string): Promise<"sent" | "no-account" | "limited"> {
  const { User, PasswordReset } = deps.db.models;
  const user = await User.findOne({ where: { email } });
  if (!user) return "no-account";
  const now = nowMs(deps);
  const recent = await PasswordReset.count({ where: { userId: user.id, createdAt: { [Op.gt]: new Date(now - 60 * 60_000) } } });
  if (recent >= RESET_MAILS_PER_ADDRESS_PER_HOUR) return "limited";
  const token = randomBytes(RESET_TOKEN_BYTES).toString("base64url");
  const expiresAt = new Date(now + RESET_TTL_MS);
  await deps.db.sequelize.transaction(async (transaction) => {
    // Only the newest link works: an older one in someone's inbox is spent.
    await PasswordReset.update({ usedAt: new Date(now) }, { where: { userId: user.id, usedAt: null }, transaction });
    await PasswordReset.create({ userId: user.id, tokenHash: hashToken(token), createdAt: new Date(now), expiresAt, usedAt: null }, { transaction });
  });
  const signature = await mailSignature(deps);
  await mailerOf(deps).send({
    to: user.email,
    subject: `[${signature}] Choose a new password`,
    text: [
      `Hello ${user.name},`,
      "",
      "Someone (we hope you) asked to reset your Blocklight password. Choose a new one here;",
      `the link works once, until ${expiresAt.toISOString().slice(0, 16).replace("T", " ")} UTC:`,
      "",
      `  ${appBaseUrl(deps)}/reset-password/${token}`,
      "",
      "If you did not ask, ignore this mail: your password stays as it is.",
      "",
      signature,
    ].join("\n"),
  });
  return "sent";
}

export async function resetPassword(deps: AppDeps, token: string, password: string): Promise<void> {
  const { User, PasswordReset } = deps.db.models;
  const now = new Date(nowMs(deps));
  const passwordHash = await hashSecret(password);
  await deps.db.sequelize.transaction(async (transaction) => {
    // Spending the token first makes a second, concurrent use find nothing to spend.
    const [count, rows] = await PasswordReset.update(
      { usedAt: now },
      { where: { tokenHash: hashToken(token), usedAt: null, expiresAt: { [Op.gt]: now } }, returning: true, transaction },
    );
    if (count !== 1) throw new HttpError(404, "not_found", "this reset link is not valid (unknown, used or more than an hour old): ask for a new one");
    const user = await User.findByPk(rows[0].userId, { transaction });
    if (!user) throw new HttpError(404, "not_found", "this account no longer exists");
    user.passwordHash = passwordHash;
    user.updatedAt = now;
    await user.save({ transaction });
    // Whoever knew the old password is signed out everywhere.
    const sessionsEnded = await endSessionsOf(deps, user.id, { transaction });
    await auditAccount(deps, { userId: user.id, action: "account.password-reset", target: user.email, after: { sessionsEnded } }, transaction);
  });
}
