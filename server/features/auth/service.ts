/**
 * Passwords (bcrypt, passwordHash.ts) and sign-in sessions. The cookie carries a signed JWT that names a row
 * of `auth_sessions`; a request is signed in only while that row exists, so signing out,
 * changing a password or being removed ends the cookie at once rather than when the JWT
 * expires (issue 10 item 8). The signature lets garbage cookies fail without a query.
 */
import { createHash, randomBytes } from "node:crypto";
import type { Response } from "express";
import jwt from "jsonwebtoken";
import { Op, type Transaction } from "sequelize";
import type { UserDto } from "@shared/contract/rest";
import type { User } from "../../db/models";
import { nowMs, type AppDeps } from "../../deps";
import { hashSecretSync } from "./passwordHash";

export const SESSION_COOKIE = "blocklight_session";
export const SESSION_TTL_S = 12 * 60 * 60; // one long running day
const SESSION_ID_BYTES = 18;

export { hashSecret, verifySecret } from "./passwordHash";
/** For single-use tokens that are long and random: a fast hash is enough to keep them out of the database. */
export const hashToken = (token: string) => createHash("sha256").update(token, "utf8").digest("hex");

export interface SessionClaims {
  sub: number;
  sid: string;
}

export function signSession(claims: SessionClaims, secret: string): string {
  return jwt.sign({ sid: claims.sid }, secret, { subject: String(claims.sub), expiresIn: SESSION_TTL_S, algorithm: "HS256" });
}

export function readSession(token: string | undefined, secret: string): SessionClaims | null {
  if (!token) return null;
  try {
    const claims = jwt.verify(token, secret, { algorithms: ["HS256"] }) as jwt.JwtPayload;
    const sub = Number(claims.sub);
    return Number.isInteger(sub) && typeof claims.sid === "string" ? { sub, sid: claims.sid } : null;
  } catch {
    return null;
  }
}

/** Opens a session row for `user` and returns the cookie value that names it. */
export async function startSession(deps: AppDeps, user: { id: number }): Promise<{ token: string; sessionId: string }> {
  const { AuthSession } = deps.db.models;
  const now = nowMs(deps);
  // Tidy this member's expired rows while we are here; nobody else needs them.
  await AuthSession.destroy({ where: { userId: user.id, expiresAt: { [Op.lte]: new Date(now) } } });
  const sessionId = randomBytes(SESSION_ID_BYTES).toString("base64url");
  await AuthSession.create({ id: sessionId, userId: user.id, expiresAt: new Date(now + SESSION_TTL_S * 1000) });
  return { token: signSession({ sub: user.id, sid: sessionId }, deps.config.sessionSecret), sessionId };
}

/** The member and session a cookie stands for, or null (bad signature, ended or expired). */
export async function resolveSession(deps: AppDeps, token: string | undefined): Promise<{ user: User; sessionId: string } | null> {
  const claims = readSession(token, deps.config.sessionSecret);
  if (!claims) return null;
  const row = await deps.db.models.AuthSession.findOne({
    where: { id: claims.sid, userId: claims.sub, expiresAt: { [Op.gt]: new Date(nowMs(deps)) } },
    include: [{ association: "user", required: true }],
  });
  return row?.user ? { user: row.user, sessionId: row.id } : null;
}

export async function endSession(deps: AppDeps, sessionId: string): Promise<void> {
  await deps.db.models.AuthSession.destroy({ where: { id: sessionId } });
  deps.bus.emit("auth.sessions-ended", { sessionId });
}

/** Ends every session of a member, or every one but `except` (the browser that asked). */
export async function endSessionsOf(deps: AppDeps, userId: number, options: { except?: string; transaction?: Transaction } = {}): Promise<number> {
  const ended = await deps.db.models.AuthSession.destroy({
    where: { userId, ...(options.except ? { id: { [Op.ne]: options.except } } : {}) },
    transaction: options.transaction,
  });
  announceSessionsEnded(deps, { userId, except: options.except }, options.transaction);
  return ended;
}

/**
 * Tells the live sockets that sessions ended, once `transaction` (if any) commits: a socket
 * dropped earlier could reconnect while the old row is still there.
 */
export function announceSessionsEnded(deps: AppDeps, ended: { userId: number; except?: string }, transaction?: Transaction): void {
  const emit = () => {
    deps.bus.emit("auth.sessions-ended", ended);
  };
  if (transaction) transaction.afterCommit(emit);
  else emit();
}

export function setSessionCookie(res: Response, deps: AppDeps, token: string): void {
  res.cookie(SESSION_COOKIE, token, {
    httpOnly: true,
    sameSite: "strict",
    secure: deps.config.secureCookies,
    maxAge: SESSION_TTL_S * 1000,
    path: "/",
  });
}

export function toUserDto(user: User): UserDto {
  return { id: user.id, email: user.email, name: user.name, role: user.role, alarmMail: user.alarmMail };
}

/** A bcrypt hash of nothing in particular, so an unknown e-mail costs as much as a wrong password. */
export const TIMING_DUMMY_HASH = hashSecretSync("blocklight-timing-dummy");
