/**
 * End-to-end sequencing (CONTRACT.md §2, revision 2): points reports share a boot's seq with
 * pulses and are stored as events of kind `points`; a message for a seq already declared
 * missed is stored with status `late`. The index lets recovery rebuild each boot's position
 * (highest stored seq, declared gaps) without reading the whole log.
 */
import type { MigrationFn } from "umzug";
import type { Sequelize } from "sequelize";

export const up: MigrationFn<Sequelize> = async ({ context: sequelize }) => {
  await sequelize.query(`
    ALTER TABLE events DROP CONSTRAINT IF EXISTS events_kind_check;
    ALTER TABLE events ADD CONSTRAINT events_kind_check
      CHECK (kind IN ('pulse','points','tick','status','shown','command','message'));
    ALTER TABLE events DROP CONSTRAINT IF EXISTS events_status_check;
    ALTER TABLE events ADD CONSTRAINT events_status_check
      CHECK (status IN ('accepted','duplicate','late','rejected'));
    CREATE INDEX events_boot_seq ON events (layout_id, node_id, boot, seq)
      WHERE seq IS NOT NULL AND NOT imported;
  `);
};

export const down: MigrationFn<Sequelize> = async ({ context: sequelize }) => {
  await sequelize.query(`
    DROP INDEX IF EXISTS events_boot_seq;
    UPDATE events SET status = 'rejected' WHERE status = 'late';
    DELETE FROM events WHERE kind = 'points';
    ALTER TABLE events DROP CONSTRAINT IF EXISTS events_status_check;
    ALTER TABLE events ADD CONSTRAINT events_status_check CHECK (status IN ('accepted','duplicate','rejected'));
    ALTER TABLE events DROP CONSTRAINT IF EXISTS events_kind_check;
    ALTER TABLE events ADD CONSTRAINT events_kind_check
      CHECK (kind IN ('pulse','tick','status','shown','command','message'));
  `);
};
