/**
 * The Sequelize connection and the migration runner. Migrations run on every start; umzug
 * records the applied ones in `SequelizeMeta`, so a second start applies nothing.
 */
import { Sequelize } from "sequelize";
import { Umzug, SequelizeStorage } from "umzug";
import * as initial from "./migrations/001-initial";
import * as live from "./migrations/002-live";
import * as importedSessions from "./migrations/003-imported-sessions";
import * as sequencing from "./migrations/004-sequencing";
import * as nodeSecretDigests from "./migrations/005-node-secret-digests";
import * as accounts from "./migrations/006-accounts";
import * as workbench from "./migrations/007-workbench";
import * as groupedAlarms from "./migrations/009-grouped-alarms";
import * as alarmSettings from "./migrations/010-alarm-settings";
import * as replayedImports from "./migrations/014-replayed-imports";
import * as nodeCredentialNotify from "./migrations/018-node-credential-notify";
import { defineModels, type Models } from "./models";

export interface Database {
  sequelize: Sequelize;
  models: Models;
  close(): Promise<void>;
}

const MIGRATIONS = [
  { name: "001-initial", ...initial },
  { name: "002-live", ...live },
  { name: "003-imported-sessions", ...importedSessions },
  { name: "004-sequencing", ...sequencing },
  { name: "005-node-secret-digests", ...nodeSecretDigests },
  { name: "006-accounts", ...accounts },
  { name: "007-workbench", ...workbench },
  { name: "009-grouped-alarms", ...groupedAlarms },
  { name: "010-alarm-settings", ...alarmSettings },
  { name: "014-replayed-imports", ...replayedImports },
  { name: "018-node-credential-notify", ...nodeCredentialNotify },
];

export async function openDatabase(url: string, options: { poolMax?: number } = {}): Promise<Database> {
  const sequelize = new Sequelize(url, {
    dialect: "postgres",
    logging: false,
    pool: { max: options.poolMax ?? 10, min: 0, idle: 10_000 },
    define: { underscored: true, timestamps: false },
  });
  await sequelize.authenticate();
  await migrate(sequelize);
  const models = defineModels(sequelize);
  return { sequelize, models, close: () => sequelize.close() };
}

export async function migrate(sequelize: Sequelize): Promise<string[]> {
  const umzug = new Umzug({
    migrations: MIGRATIONS.map((m) => ({ name: m.name, up: m.up, down: m.down })),
    context: sequelize,
    storage: new SequelizeStorage({ sequelize }),
    logger: undefined,
  });
  const applied = await umzug.up();
  return applied.map((m) => m.name);
}
