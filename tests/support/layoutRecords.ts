/**
 * A layout's records as the workbench edits them: read through `GET /api/layouts/:slug`
 * (read-only fields taken off) and saved back through `PUT` after a change. For live tests that
 * save records while a layout runs.
 */
import { expect } from "vitest";
import type { LayoutDetail } from "@shared/contract/rest";
import type { TestApp } from "./testApp";

type Agent = Awaited<ReturnType<TestApp["signIn"]>>;
export type LayoutRecords = Omit<LayoutDetail, "versions" | "liveVersion" | "archivedAt"> & { format: string };

/** `recordsOf()` reads the layout's records; `save(change)` reads, changes and saves them (200 expected). */
export function layoutRecords(agent: () => Agent, slug: string) {
  const recordsOf = async (): Promise<LayoutRecords> => {
    const res = await agent().get(`/api/layouts/${slug}`);
    expect(res.status).toBe(200);
    const { versions: _v, liveVersion: _l, archivedAt: _a, schematic, ...rest } = res.body.layout as LayoutDetail;
    return { format: "blocklight.layout/1", ...rest, ...(schematic ? { schematic } : {}) } as LayoutRecords;
  };
  const save = async (change: (r: LayoutRecords) => void): Promise<void> => {
    const records = await recordsOf();
    change(records);
    const res = await agent().put(`/api/layouts/${slug}`).send(records);
    expect(res.status, JSON.stringify(res.body)).toBe(200);
  };
  return { recordsOf, save };
}
