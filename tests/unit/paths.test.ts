/** Page links (src/lib/paths.ts): the route table's patterns, filled in. */
import { describe, expect, it } from "vitest";
import { PAGES, paths } from "../../src/lib/paths";

describe("page paths", () => {
  it("fills the pattern the route table uses", () => {
    expect(PAGES.replay).toBe("/layouts/:slug/sessions/:id/replay");
    expect(paths.replay({ slug: "kestrel-bank", id: 3 })).toBe("/layouts/kestrel-bank/sessions/3/replay");
    expect(paths.layouts()).toBe("/");
    expect(paths.members()).toBe("/admin/members");
  });

  it("adds the query (empty values left out) and the hash, encoded", () => {
    expect(paths.sessions({ slug: "kestrel-bank" }, { query: { session: 2, event: "41" } })).toBe("/layouts/kestrel-bank/sessions?session=2&event=41");
    expect(paths.simulate({ slug: "kestrel-bank" }, { query: { version: undefined } })).toBe("/layouts/kestrel-bank/simulate");
    expect(paths.live({ slug: "kestrel-bank" }, { hash: "board a" })).toBe("/layouts/kestrel-bank/live#board%20a");
  });
});
