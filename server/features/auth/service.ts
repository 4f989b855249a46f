/**
 * Passwords (bcrypt) and session tokens (a signed JWT carried in an httpOnly cookie).
 */
import bcrypt from "bcryptjs";
import jwt from "jsonwebtoken";
import type { Role, UserDto } from "../../../shared/contract/rest";
import type { User } from "../../db/models";

export const SESSION_COOKIE = "blocklight_session";
export const SESSION_TTL_S = 12 * 60 * 60; // one long running day
const BCRYPT_ROUNDS = 10;

export const hashSecret = (secret: string) => bcrypt.hash(secret, BCRYPT_ROUNDS);
export const verifySecret = (secret: string, hash: string) => bcrypt.compare(secret, hash);

export interface SessionClaims {
  sub: number;
  role: Role;
}

export function signSession(user: { id: number; role: Role }, secret: string): string {
  return jwt.sign({ role: user.role }, secret, { subject: String(user.id), expiresIn: SESSION_TTL_S, algorithm: "HS256" });
}

export function readSession(token: string | undefined, secret: string): SessionClaims | null {
  if (!token) return null;
  try {
    const claims = jwt.verify(token, secret, { algorithms: ["HS256"] }) as jwt.JwtPayload;
    const sub = Number(claims.sub);
    return Number.isInteger(sub) ? { sub, role: claims.role as Role } : null;
  } catch {
    return null;
  }
}

export function toUserDto(user: User): UserDto {
  return { id: user.id, email: user.email, name: user.name, role: user.role };
}

/** A bcrypt hash of nothing in particular, so an unknown e-mail costs as much as a wrong password. */
export const TIMING_DUMMY_HASH = bcrypt.hashSync("blocklight-timing-dummy", BCRYPT_ROUNDS);
