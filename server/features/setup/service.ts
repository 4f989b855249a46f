/**
 * First start with no account (issue 11): `npm start` prints a setup link; whoever holds its
 * token names the society and becomes its first admin, once.
 */
import { QueryTypes } from "sequelize";
import type { SetupBody } from "@shared/contract/accounts";
import type { AppConfig } from "../../config";
import type { AppDeps } from "../../deps";
import { conflict, HttpError } from "../../http/errors";
import { auditAccount } from "../audit/accounts";
import { hashSecret } from "../auth/service";
import { setSocietyName } from "./society";
import { ensureSetupToken, removeSetupToken, setupTokenMatches } from "./token";

/** Any constant will do: it only serialises concurrent setups against each other. */
const SETUP_LOCK_KEY = 7_311_006;

export async function setupNeeded(deps: Pick<AppDeps, "db">): Promise<boolean> {
  return (await deps.db.models.User.count()) === 0;
}

/**
 * With no account yet, makes sure a setup token exists and returns it (the launcher prints
 * the link); with accounts, removes any stale token file and returns null.
 */
export async function prepareSetupToken(deps: { db: AppDeps["db"]; config: Pick<AppConfig, "dataDir"> }): Promise<string | null> {
  if (await setupNeeded(deps)) return ensureSetupToken(deps.config.dataDir);
  removeSetupToken(deps.config.dataDir);
  return null;
}

export const setupLink = (baseUrl: string, token: string) => `${baseUrl}/setup?token=${encodeURIComponent(token)}`;

export const setupDone = () => conflict("this install is set up already: sign in, or ask your society's admin for an invitation");

/** The caller has checked the token; this makes the society and its admin in one transaction. */
export async function completeSetup(deps: AppDeps, body: SetupBody): Promise<{ userId: number }> {
  const passwordHash = await hashSecret(body.password);
  const userId = await deps.db.sequelize.transaction(async (transaction) => {
    await deps.db.sequelize.query(`SELECT pg_advisory_xact_lock(:key)`, { replacements: { key: SETUP_LOCK_KEY }, type: QueryTypes.SELECT, transaction });
    if ((await deps.db.models.User.count({ transaction })) > 0) throw setupDone();
    await setSocietyName(deps, body.society, transaction);
    const user = await deps.db.models.User.create({ email: body.email, name: body.name, role: "admin", passwordHash }, { transaction });
    await auditAccount(deps, { userId: user.id, action: "setup", target: body.email, after: { society: body.society, name: body.name, role: "admin" } }, transaction);
    return user.id;
  });
  removeSetupToken(deps.config.dataDir);
  return { userId };
}

export function checkSetupToken(deps: AppDeps, token: unknown): void {
  if (typeof token !== "string" || !setupTokenMatches(deps.config.dataDir, token)) {
    throw new HttpError(403, "bad_setup_token", "this setup link is not valid: use the link that `npm start` printed, or the token in DATA_DIR/setup-token");
  }
}
