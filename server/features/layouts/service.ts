/**
 * Layouts: import and export of layout files (CONTRACT.md §3), the layout list, and nodes.
 * Creating and editing the records is in `edit.ts`; looking a layout up (by slug, its detail,
 * its live version) is server/data/layouts.ts, shared by every feature.
 */
import { randomBytes } from "node:crypto";
import { QueryTypes } from "sequelize";
import type { z } from "zod";
import type { createNodeBodySchema, LayoutSummary } from "@shared/contract/rest";
import { capErrors } from "@shared/contract/errorCap";
import { canonicalLayout } from "@shared/layout/canonical";
import type { LayoutFile } from "@shared/layout/schema";
import { canonicalRulebook } from "@shared/rulebook/canonical";
import { validateLayoutFile } from "@shared/rulebook/validate";
import type { AppDeps } from "../../deps";
import { HttpError, conflict } from "../../http/errors";
import { hashNodeSecret } from "../../nodeSecret";
import { findLayout, layoutRecords, liveRulebookVersion, refuseIfArchived } from "../../data/layouts";
import { readRecords, writeRecords } from "../../data/layoutRecords";

/** The parsed body of `POST …/nodes`; callers inside the server may leave `points` out. */
type CreateNodeBodyParsed = Omit<z.output<typeof createNodeBodySchema>, "points"> & { points?: string[] };
type Row = Record<string, unknown>;

/** Validates and stores a layout file; its rulebook becomes version 1, published and live. */
export async function importLayout(deps: AppDeps, input: unknown, authorId: number | null): Promise<{ slug: string; layoutId: number }> {
  const result = validateLayoutFile(input);
  if (!result.ok) throw new HttpError(400, "invalid_layout", `the layout file has ${result.errors.length} error(s)`, capErrors(result.errors));
  const file = result.layout;
  const { Layout, RulebookVersion } = deps.db.models;
  const layoutId = await deps.db.sequelize.transaction(async (transaction) => {
    if (await Layout.findOne({ where: { slug: file.slug }, transaction })) throw conflict(`a layout with slug "${file.slug}" already exists`);
    const layout = await Layout.create(
      { slug: file.slug, name: file.name, scaleName: file.scale.name, scaleRatio: file.scale.ratio, schematic: file.schematic ?? null, liveVersion: 1 },
      { transaction },
    );
    await writeRecords(deps, layout.id, file, transaction);
    await RulebookVersion.create(
      { layoutId: layout.id, version: 1, status: "published", rulebook: canonicalRulebook(file.rulebook), proof: null, note: "imported with the layout", authorId, publishedAt: new Date() },
      { transaction },
    );
    return layout.id;
  });
  deps.bus.emit("rulebook.published", { layoutId, slug: file.slug, version: 1 });
  return { slug: file.slug, layoutId };
}

/**
 * The layout file as it stands, with the live rulebook, in canonical key order; node secrets
 * never leave. A layout with no published rulebook yet cannot be exported as a file (409).
 */
export async function exportLayout(deps: AppDeps, slug: string): Promise<LayoutFile> {
  const layout = await findLayout(deps, slug);
  const live = await liveRulebookVersion(deps, layout);
  if (!live) throw conflict(`layout "${slug}" has no published rulebook yet, so it is not a complete layout file`);
  return canonicalLayout({ ...(await layoutRecords(deps, layout)), rulebook: live.rulebook });
}

export async function listLayouts(deps: AppDeps): Promise<LayoutSummary[]> {
  const rows = await deps.db.sequelize.query<Row>(
    `SELECT l.slug, l.name, l.scale_name, l.scale_ratio, l.live_version, l.archived_at,
            (SELECT count(*) FROM detectors d WHERE d.layout_id = l.id)::int AS detector_count,
            (SELECT count(*) FROM signals s WHERE s.layout_id = l.id)::int AS signal_count,
            (SELECT count(*) FROM nodes n WHERE n.layout_id = l.id)::int AS node_count
       FROM layouts l ORDER BY l.name`,
    { type: QueryTypes.SELECT },
  );
  return rows.map((r) => ({
    slug: r.slug as string,
    name: r.name as string,
    scale: { name: r.scale_name as string, ratio: Number(r.scale_ratio) },
    liveVersion: (r.live_version as number | null) ?? null,
    archived: r.archived_at !== null,
    detectorCount: r.detector_count as number,
    signalCount: r.signal_count as number,
    nodeCount: r.node_count as number,
  }));
}

const SECRET_BYTES = 24;

/**
 * Registers a board (or re-issues the secret of an existing one) and returns its MQTT
 * password once; only its SHA-256 digest is kept (server/nodeSecret.ts says why not bcrypt).
 */
export async function registerNode(deps: AppDeps, slug: string, body: CreateNodeBodyParsed): Promise<{ id: string; secret: string }> {
  const layout = await findLayout(deps, slug);
  refuseIfArchived(layout);
  const parts = await readRecords(deps, layout.id);
  const errors: { path: string; message: string }[] = [];
  const detectorIds = new Set(parts.detectors.map((d) => d.id));
  const signalIds = new Set(parts.signals.map((s) => s.id));
  const pointsIds = new Set(parts.points.map((p) => p.id));
  body.detectors.forEach((d, i) => {
    if (!detectorIds.has(d)) errors.push({ path: `$.detectors[${i}]`, message: `no detector "${d}" on this layout` });
    const other = parts.nodes.find((n) => n.id !== body.id && n.detectors.includes(d));
    if (other) errors.push({ path: `$.detectors[${i}]`, message: `detector "${d}" is already served by node "${other.id}"` });
  });
  body.signals.forEach((s, i) => {
    if (!signalIds.has(s)) errors.push({ path: `$.signals[${i}]`, message: `no signal "${s}" on this layout` });
  });
  const points = body.points ?? [];
  points.forEach((p, i) => {
    if (!pointsIds.has(p)) errors.push({ path: `$.points[${i}]`, message: `no points "${p}" on this layout` });
  });
  if (errors.length) throw new HttpError(400, "invalid_node", "the node names things this layout does not have", errors);

  const secret = randomBytes(SECRET_BYTES).toString("base64url");
  const secretHash = hashNodeSecret(secret);
  const { NodeRecord } = deps.db.models;
  await deps.db.sequelize.transaction(async (transaction) => {
    const values = { name: body.name, detectors: body.detectors, signals: body.signals, points, secretHash };
    const row = await NodeRecord.findOne({ where: { layoutId: layout.id, nodeId: body.id }, transaction, lock: transaction.LOCK.UPDATE });
    if (row) {
      await row.update(values, { transaction });
    } else {
      const last = (await NodeRecord.max<number | null, InstanceType<typeof NodeRecord>>("position", { where: { layoutId: layout.id }, transaction })) ?? -1;
      await NodeRecord.create({ layoutId: layout.id, nodeId: body.id, ...values, position: last + 1 }, { transaction });
    }
  });
  deps.bus.emit("layout.nodes-changed", { layoutId: layout.id, slug });
  return { id: body.id, secret };
}

