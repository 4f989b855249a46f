/**
 * Grouped alarms: an alarm is open at most once per layout, kind and subject. Another
 * occurrence while it is open adds to `occurrences` and moves `last_seen_at` (its message
 * becomes the latest one), instead of a new row per occurrence. Open duplicates from before
 * are folded into the oldest of each group, with their count.
 */
import type { MigrationFn } from "umzug";
import type { Sequelize } from "sequelize";

export const up: MigrationFn<Sequelize> = async ({ context: sequelize }) => {
  await sequelize.query(`
    ALTER TABLE alarms ADD COLUMN occurrences integer NOT NULL DEFAULT 1 CHECK (occurrences >= 1);
    ALTER TABLE alarms ADD COLUMN last_seen_at timestamptz;
    UPDATE alarms SET last_seen_at = raised_at;
    ALTER TABLE alarms ALTER COLUMN last_seen_at SET NOT NULL, ALTER COLUMN last_seen_at SET DEFAULT now();

    CREATE TEMP TABLE alarm_groups AS
      SELECT layout_id, kind, coalesce(subject, '') AS subject_key, min(id) AS keep, count(*)::int AS n, max(raised_at) AS last,
             (array_agg(message ORDER BY raised_at DESC, id DESC))[1] AS latest
        FROM alarms WHERE cleared_at IS NULL GROUP BY 1, 2, 3 HAVING count(*) > 1;
    UPDATE alarms a SET occurrences = g.n, last_seen_at = g.last, message = g.latest FROM alarm_groups g WHERE a.id = g.keep;
    DELETE FROM alarms a USING alarm_groups g
     WHERE a.layout_id = g.layout_id AND a.kind = g.kind AND coalesce(a.subject, '') = g.subject_key AND a.cleared_at IS NULL AND a.id <> g.keep;
    DROP TABLE alarm_groups;

    DROP INDEX IF EXISTS alarms_open_subject;
    CREATE UNIQUE INDEX alarms_open_once ON alarms (layout_id, kind, (coalesce(subject, ''))) WHERE cleared_at IS NULL;
  `);
};

export const down: MigrationFn<Sequelize> = async ({ context: sequelize }) => {
  await sequelize.query(`
    DROP INDEX IF EXISTS alarms_open_once;
    CREATE INDEX alarms_open_subject ON alarms (layout_id, kind, subject) WHERE cleared_at IS NULL;
    ALTER TABLE alarms DROP COLUMN last_seen_at;
    ALTER TABLE alarms DROP COLUMN occurrences;
  `);
};
