/**
 * Layout lookup, in one place for every feature: a layout by slug (404 when there is none), its
 * live rulebook version, its records and versions, the detail the workbench and displays read,
 * and the read-only guard of an archived layout. Features import this module, not the layouts
 * feature's service (the lint enforces it); importing, exporting and editing stay in the feature.
 */
import { QueryTypes } from "sequelize";
import type { LayoutDetail, RulebookVersionSummary } from "@shared/contract/rest";
import { canonicalLayout } from "@shared/layout/canonical";
import { LAYOUT_FORMAT, type LayoutRecords } from "@shared/layout/schema";
import type { Layout } from "../db/models";
import type { AppDeps } from "../deps";
import { HttpError, notFound } from "../http/errors";
import { readRecords, type RecordLists } from "./layoutRecords";

type Row = Record<string, unknown>;

export async function findLayout(deps: AppDeps, slug: string): Promise<Layout> {
  const layout = await deps.db.models.Layout.findOne({ where: { slug } });
  if (!layout) throw notFound(`layout "${slug}"`);
  return layout;
}

export async function liveRulebookVersion(deps: AppDeps, layout: Layout) {
  if (layout.liveVersion === null) return null;
  return deps.db.models.RulebookVersion.findOne({ where: { layoutId: layout.id, version: layout.liveVersion } });
}

/** The records as a layout file without rulebook, in canonical key order. */
export async function layoutRecords(deps: AppDeps, layout: Layout): Promise<LayoutRecords & RecordLists> {
  const parts = await readRecords(deps, layout.id);
  return canonicalLayout({
    format: LAYOUT_FORMAT,
    slug: layout.slug,
    name: layout.name,
    scale: { name: layout.scaleName, ratio: layout.scaleRatio },
    ...parts,
    ...(layout.schematic ? { schematic: layout.schematic } : {}),
  });
}

export async function listVersions(deps: AppDeps, layout: Layout): Promise<RulebookVersionSummary[]> {
  const rows = await deps.db.sequelize.query<Row>(
    `SELECT v.version, v.status, v.note, v.created_at, u.name AS author,
            v.proof->>'verdict' AS verdict, v.proof->>'provedAt' AS proved_at
       FROM rulebook_versions v LEFT JOIN users u ON u.id = v.author_id
      WHERE v.layout_id = :layoutId ORDER BY v.version DESC`,
    { replacements: { layoutId: layout.id }, type: QueryTypes.SELECT },
  );
  return rows.map((r) => ({
    version: r.version as number,
    status: r.status as RulebookVersionSummary["status"],
    live: r.version === layout.liveVersion,
    author: (r.author as string | null) ?? null,
    note: (r.note as string | null) ?? null,
    createdAt: new Date(r.created_at as string).toISOString(),
    verdict: (r.verdict as RulebookVersionSummary["verdict"] | null) ?? null,
    provedAt: r.proved_at ? new Date(r.proved_at as string).toISOString() : null,
  }));
}

export async function layoutDetail(deps: AppDeps, slug: string): Promise<LayoutDetail> {
  const layout = await findLayout(deps, slug);
  return detailOf(deps, layout);
}

export async function detailOf(deps: AppDeps, layout: Layout): Promise<LayoutDetail> {
  const [parts, versions] = await Promise.all([readRecords(deps, layout.id), listVersions(deps, layout)]);
  return {
    slug: layout.slug,
    name: layout.name,
    scale: { name: layout.scaleName, ratio: layout.scaleRatio },
    ...parts,
    schematic: layout.schematic,
    versions,
    revision: layout.revision,
    liveVersion: layout.liveVersion,
    archivedAt: layout.archivedAt ? layout.archivedAt.toISOString() : null,
  };
}

/** An archived layout is read-only: every change is refused with 409. */
export function refuseIfArchived(layout: Layout): void {
  if (layout.archivedAt) throw new HttpError(409, "archived", `layout "${layout.slug}" is archived and read-only; an admin can restore it`);
}
