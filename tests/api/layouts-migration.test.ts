/**
 * Migration 007 on a database that already holds layouts: points become hand-worked, boards
 * report no points, revisions start at 1, and stored rulebooks (scrambled by jsonb) are
 * rewritten in the canonical key order as json, which keeps it from then on.
 */
import { QueryTypes } from "sequelize";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import * as workbench from "../../server/db/migrations/007-workbench";
import { RULEBOOK_KEY_ORDER } from "@shared/rulebook/canonical";
import { startTestApp, type TestApp } from "../support/testApp";

describe("migration 007 (workbench) on existing data", () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await startTestApp();
  });
  afterAll(() => t.close());

  it("converts the demo layouts' rows and rulebooks", async () => {
    const sequelize = t.deps.db.sequelize;
    const migration = { name: "007-workbench", path: undefined, context: sequelize };
    await workbench.down(migration);
    // Before 007 the rulebook column was jsonb: it re-sorts keys, shortest first.
    const [{ keys }] = await sequelize.query<{ keys: string[] }>(
      "SELECT array(SELECT jsonb_object_keys(rulebook)) AS keys FROM rulebook_versions ORDER BY id LIMIT 1",
      { type: QueryTypes.SELECT },
    );
    expect(keys).not.toEqual([...RULEBOOK_KEY_ORDER]);

    await workbench.up(migration);
    const rows = await sequelize.query<{ rulebook: Record<string, unknown>; type: string }>(
      "SELECT rulebook, pg_typeof(rulebook)::text AS type FROM rulebook_versions ORDER BY id",
      { type: QueryTypes.SELECT },
    );
    expect(rows.length).toBeGreaterThan(0);
    for (const row of rows) {
      expect(row.type).toBe("json");
      expect(Object.keys(row.rulebook)).toEqual(RULEBOOK_KEY_ORDER.filter((key) => key in row.rulebook));
    }
    const points = await t.deps.db.models.PointsRecord.findAll();
    expect(points.length).toBeGreaterThan(0);
    expect(points.every((p) => p.worked === "hand")).toBe(true);
    const nodes = await t.deps.db.models.NodeRecord.findAll();
    expect(nodes.every((n) => Array.isArray(n.points) && n.points.length === 0)).toBe(true);
    expect((await t.deps.db.models.Layout.findAll()).map((l) => l.revision)).toEqual([1, 1]);
  });
});
