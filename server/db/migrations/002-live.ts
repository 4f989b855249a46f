/**
 * The live pipeline's additions: messages on topics that are neither pulse, status nor
 * shown are still kept (kind `message`, always rejected); replay reads a layout's events
 * in id order; open alarms are looked up by what they are about (dedupe).
 */
import type { MigrationFn } from "umzug";
import type { Sequelize } from "sequelize";

export const up: MigrationFn<Sequelize> = async ({ context: sequelize }) => {
  await sequelize.query(`
    ALTER TABLE events DROP CONSTRAINT IF EXISTS events_kind_check;
    ALTER TABLE events ADD CONSTRAINT events_kind_check
      CHECK (kind IN ('pulse','tick','status','shown','command','message'));
    CREATE INDEX events_layout_order ON events (layout_id, id);
    CREATE INDEX alarms_open_subject ON alarms (layout_id, kind, subject) WHERE cleared_at IS NULL;
    CREATE INDEX display_links_layout ON display_links (layout_id);
  `);
};

export const down: MigrationFn<Sequelize> = async ({ context: sequelize }) => {
  await sequelize.query(`
    DROP INDEX IF EXISTS display_links_layout;
    DROP INDEX IF EXISTS alarms_open_subject;
    DROP INDEX IF EXISTS events_layout_order;
    DELETE FROM events WHERE kind = 'message';
    ALTER TABLE events DROP CONSTRAINT IF EXISTS events_kind_check;
    ALTER TABLE events ADD CONSTRAINT events_kind_check CHECK (kind IN ('pulse','tick','status','shown','command'));
  `);
};
