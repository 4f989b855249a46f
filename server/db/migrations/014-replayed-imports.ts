/**
 * An imported session stores the uploaded inputs only; the changes they make are computed by
 * replaying them through the engine (server/features/sessions/importReplay.ts) and stored like
 * a live session's. This marks when that was done, so sessions imported before it are
 * replayed once, the first time their log is read.
 */
import type { MigrationFn } from "umzug";
import type { Sequelize } from "sequelize";

export const up: MigrationFn<Sequelize> = async ({ context: sequelize }) => {
  await sequelize.query(`ALTER TABLE sessions ADD COLUMN changes_replayed_at timestamptz;`);
};

export const down: MigrationFn<Sequelize> = async ({ context: sequelize }) => {
  await sequelize.query(`
    DELETE FROM changes c USING events e WHERE e.id = c.event_id AND e.imported;
    ALTER TABLE sessions DROP COLUMN IF EXISTS changes_replayed_at;
  `);
};
