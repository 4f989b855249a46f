/**
 * One's own account: name and password (the current password is asked for both) and the
 * choices that need none. Every change made with the password ends the account's other
 * sessions (CONTRACT.md §6), so it doubles as "sign out my other browsers".
 */
import type { PreferencesBody, UpdateMeBody } from "@shared/contract/accounts";
import type { UserDto } from "@shared/contract/rest";
import type { AppDeps } from "../../deps";
import { HttpError, notFound } from "../../http/errors";
import { auditAccount } from "../audit/accounts";
import { endSessionsOf, hashSecret, toUserDto, verifySecret } from "./service";

export async function updateOwnAccount(deps: AppDeps, who: { userId: number; sessionId: string }, body: UpdateMeBody): Promise<{ user: UserDto; sessionsEnded: number }> {
  const user = await deps.db.models.User.findByPk(who.userId);
  if (!user) throw notFound("account");
  if (!(await verifySecret(body.currentPassword, user.passwordHash))) {
    throw new HttpError(403, "wrong_password", "that is not your current password", [{ path: "$.currentPassword", message: "that is not your current password" }]);
  }
  const passwordHash = body.password !== undefined ? await hashSecret(body.password) : undefined;
  let sessionsEnded = 0;
  await deps.db.sequelize.transaction(async (transaction) => {
    const before = { name: user.name };
    if (body.name !== undefined) user.name = body.name;
    if (passwordHash) user.passwordHash = passwordHash;
    user.updatedAt = new Date();
    await user.save({ transaction });
    sessionsEnded = await endSessionsOf(deps, user.id, { except: who.sessionId, transaction });
    await auditAccount(deps, { userId: user.id, action: passwordHash ? "account.password" : "account.name", target: user.email, before, after: { name: user.name, sessionsEnded } }, transaction);
  });
  return { user: toUserDto(user), sessionsEnded };
}

export async function updateOwnPreferences(deps: AppDeps, userId: number, body: PreferencesBody): Promise<UserDto> {
  const user = await deps.db.models.User.findByPk(userId);
  if (!user) throw notFound("account");
  user.alarmMail = body.alarmMail;
  await user.save();
  return toUserDto(user);
}
