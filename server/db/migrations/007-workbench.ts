/**
 * The engineer's workbench (issue 12): layouts become editable records.
 * - `layouts.revision` counts saves, so a stale editor gets 409 instead of overwriting a
 *   colleague's work; `layouts.archived_at` marks a layout that no longer runs live.
 * - Points say how they are worked and boards which points they report (CONTRACT.md §3);
 *   existing points are hand-worked, existing boards report none, as `/1` files mean.
 * - Rulebooks and schematics are stored as `json`, not `jsonb`: jsonb re-sorts object keys
 *   (shortest first), which scrambled the author's order of latches, counters and rule
 *   fields. Stored rulebooks are rewritten once in the canonical key order.
 */
import type { MigrationFn } from "umzug";
import { QueryTypes, type Sequelize } from "sequelize";
import { canonicalRulebook } from "@shared/rulebook/canonical";

export const up: MigrationFn<Sequelize> = async ({ context: sequelize }) => {
  await sequelize.query(`
    ALTER TABLE layouts ADD COLUMN revision integer NOT NULL DEFAULT 1;
    ALTER TABLE layouts ADD COLUMN archived_at timestamptz;
    ALTER TABLE points ADD COLUMN worked text NOT NULL DEFAULT 'hand' CHECK (worked IN ('power','hand'));
    ALTER TABLE nodes ADD COLUMN points jsonb NOT NULL DEFAULT '[]';
    ALTER TABLE rulebook_versions ALTER COLUMN rulebook TYPE json USING rulebook::json;
    ALTER TABLE layouts ALTER COLUMN schematic TYPE json USING schematic::json;
  `);
  const rows = await sequelize.query<{ id: number; rulebook: unknown }>("SELECT id, rulebook FROM rulebook_versions", { type: QueryTypes.SELECT });
  for (const row of rows) {
    await sequelize.query("UPDATE rulebook_versions SET rulebook = :rulebook::json WHERE id = :id", {
      replacements: { id: row.id, rulebook: JSON.stringify(canonicalRulebook(row.rulebook)) },
    });
  }
};

export const down: MigrationFn<Sequelize> = async ({ context: sequelize }) => {
  await sequelize.query(`
    ALTER TABLE layouts ALTER COLUMN schematic TYPE jsonb USING schematic::jsonb;
    ALTER TABLE rulebook_versions ALTER COLUMN rulebook TYPE jsonb USING rulebook::jsonb;
    ALTER TABLE nodes DROP COLUMN points;
    ALTER TABLE points DROP COLUMN worked;
    ALTER TABLE layouts DROP COLUMN archived_at;
    ALTER TABLE layouts DROP COLUMN revision;
  `);
};
