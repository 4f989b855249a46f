/**
 * Imported event logs (PRODUCT.md feature 8): a session made from an uploaded export says
 * where it came from, and its events are marked so the live runner never reads them —
 * recovery, pulse dedupe and node status look at live events only. The pulse-once index
 * leaves imported pulses out: a log exported from this very layout repeats the (node, boot,
 * seq) of live pulses that are already stored.
 */
import type { MigrationFn } from "umzug";
import type { Sequelize } from "sequelize";

export const up: MigrationFn<Sequelize> = async ({ context: sequelize }) => {
  await sequelize.query(`
    ALTER TABLE sessions ADD COLUMN imported_from text;
    ALTER TABLE events ADD COLUMN imported boolean NOT NULL DEFAULT false;
    DROP INDEX events_pulse_once;
    CREATE UNIQUE INDEX events_pulse_once ON events (layout_id, node_id, boot, seq)
      WHERE kind = 'pulse' AND status = 'accepted' AND NOT imported;
  `);
};

export const down: MigrationFn<Sequelize> = async ({ context: sequelize }) => {
  await sequelize.query(`
    DELETE FROM events WHERE imported;
    DELETE FROM sessions WHERE imported_from IS NOT NULL;
    DROP INDEX events_pulse_once;
    CREATE UNIQUE INDEX events_pulse_once ON events (layout_id, node_id, boot, seq)
      WHERE kind = 'pulse' AND status = 'accepted';
    ALTER TABLE events DROP COLUMN imported;
    ALTER TABLE sessions DROP COLUMN imported_from;
  `);
};
