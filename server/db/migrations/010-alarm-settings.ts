/**
 * Alarm settings per layout (the running day's alarm tuning): the watchers' thresholds and
 * how long a board may take to connect after a session opens. Only what an engineer changed
 * is stored; anything absent takes the default, so a default that improves reaches every
 * layout that never set it.
 *
 * Also, for starting and ending a running day from the live page: who ended a session and
 * the signaller's note on it.
 */
import type { MigrationFn } from "umzug";
import type { Sequelize } from "sequelize";

export const up: MigrationFn<Sequelize> = async ({ context: sequelize }) => {
  await sequelize.query(`
    CREATE TABLE alarm_settings (
      layout_id integer PRIMARY KEY REFERENCES layouts(id) ON DELETE CASCADE,
      settings jsonb NOT NULL DEFAULT '{}',
      updated_by integer REFERENCES users(id) ON DELETE SET NULL,
      updated_at timestamptz NOT NULL DEFAULT now()
    );
    ALTER TABLE sessions ADD COLUMN closed_by integer REFERENCES users(id) ON DELETE SET NULL;
    ALTER TABLE sessions ADD COLUMN note text;
  `);
};

export const down: MigrationFn<Sequelize> = async ({ context: sequelize }) => {
  await sequelize.query(`
    ALTER TABLE sessions DROP COLUMN IF EXISTS note;
    ALTER TABLE sessions DROP COLUMN IF EXISTS closed_by;
    DROP TABLE IF EXISTS alarm_settings;
  `);
};
