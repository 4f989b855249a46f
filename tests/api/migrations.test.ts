import { QueryTypes } from "sequelize";
import { describe, expect, it } from "vitest";
import { openDatabase, migrate } from "../../server/db/database";
import { createTestDatabase } from "../support/testApp";

describe("migrations", () => {
  it("build the whole schema on an empty database and apply nothing the second time", async () => {
    const db = await openDatabase(await createTestDatabase());
    try {
      const tables = await db.sequelize.query<{ tablename: string }>("SELECT tablename FROM pg_tables WHERE schemaname = 'public'", {
        type: QueryTypes.SELECT,
      });
      const names = tables.map((t) => t.tablename);
      for (const table of ["users", "layouts", "lines", "detectors", "signals", "points", "nodes", "rulebook_versions", "sessions", "events", "changes", "alarms", "audit_entries", "display_links", "invitations", "mail_outbox", "snapshots"]) {
        expect(names).toContain(table);
      }
      const indexes = await db.sequelize.query<{ indexname: string }>("SELECT indexname FROM pg_indexes WHERE tablename = 'events'", { type: QueryTypes.SELECT });
      expect(indexes.map((i) => i.indexname)).toEqual(expect.arrayContaining(["events_session_order", "events_layout_time", "events_pulse_once"]));
      expect(await migrate(db.sequelize)).toEqual([]);
    } finally {
      await db.close();
    }
  });
});
