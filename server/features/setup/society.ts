/**
 * The society this install serves: named at setup (or by the demo seed) and shown in the
 * header, in mail and on the visitor display.
 */
import type { Transaction } from "sequelize";
import type { AppDeps } from "../../deps";

export async function societyName(deps: Pick<AppDeps, "db">): Promise<string | null> {
  const row = await deps.db.models.Society.findByPk(1);
  return row?.name ?? null;
}

export async function setSocietyName(deps: Pick<AppDeps, "db">, name: string, transaction?: Transaction): Promise<void> {
  await deps.db.models.Society.upsert({ id: 1, name }, { transaction });
}

/** "Blocklight" alone, or "Blocklight · Society name" once the society is named: mail subjects and signatures. */
export async function mailSignature(deps: Pick<AppDeps, "db">): Promise<string> {
  const name = await societyName(deps);
  return name ? `Blocklight · ${name}` : "Blocklight";
}
