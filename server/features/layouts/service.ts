/**
 * Layouts: import and export of layout files (CONTRACT.md §3), reading, and nodes.
 */
import { randomBytes } from "node:crypto";
import type { Transaction } from "sequelize";
import { QueryTypes } from "sequelize";
import type { LayoutDetail, LayoutSummary, NodeDto, RulebookVersionSummary } from "../../../shared/contract/rest";
import { LAYOUT_FORMAT, type LayoutFile } from "../../../shared/layout/schema";
import { validateLayoutFile } from "../../../shared/rulebook/validate";
import type { AppDeps } from "../../deps";
import { HttpError, conflict, notFound } from "../../http/errors";
import { hashNodeSecret } from "../../nodeSecret";
import type { Layout } from "../../db/models";

export async function findLayout(deps: AppDeps, slug: string): Promise<Layout> {
  const layout = await deps.db.models.Layout.findOne({ where: { slug } });
  if (!layout) throw notFound(`layout "${slug}"`);
  return layout;
}

/** Validates and stores a layout file; its rulebook becomes version 1, published and live. */
export async function importLayout(deps: AppDeps, input: unknown, authorId: number | null): Promise<{ slug: string; layoutId: number }> {
  const result = validateLayoutFile(input);
  if (!result.ok) throw new HttpError(400, "invalid_layout", `the layout file has ${result.errors.length} error(s)`, result.errors);
  const file = result.layout;
  const { Layout, RulebookVersion } = deps.db.models;
  const layoutId = await deps.db.sequelize.transaction(async (transaction) => {
    if (await Layout.findOne({ where: { slug: file.slug }, transaction })) throw conflict(`a layout with slug "${file.slug}" already exists`);
    const layout = await Layout.create(
      { slug: file.slug, name: file.name, scaleName: file.scale.name, scaleRatio: file.scale.ratio, schematic: file.schematic ?? null, liveVersion: 1 },
      { transaction },
    );
    await insertParts(deps, layout.id, file, transaction);
    await RulebookVersion.create(
      { layoutId: layout.id, version: 1, status: "published", rulebook: file.rulebook, proof: null, note: "imported with the layout", authorId, publishedAt: new Date() },
      { transaction },
    );
    return layout.id;
  });
  deps.bus.emit("rulebook.published", { layoutId, slug: file.slug, version: 1 });
  return { slug: file.slug, layoutId };
}

async function insertParts(deps: AppDeps, layoutId: number, file: LayoutFile, transaction: Transaction): Promise<void> {
  const q = (sql: string, rows: unknown[][]) =>
    rows.length === 0
      ? Promise.resolve()
      : deps.db.sequelize.query(sql + " VALUES " + rows.map((r) => "(" + r.map(() => "?").join(",") + ")").join(","), {
          replacements: rows.flat(),
          transaction,
        });
  await q("INSERT INTO lines (layout_id, line_id, name, position)", file.lines.map((l, i) => [layoutId, l.id, l.name, i]));
  await q(
    "INSERT INTO detectors (layout_id, detector_id, name, line_id, at, position)",
    file.detectors.map((d, i) => [layoutId, d.id, d.name, d.line, d.at, i]),
  );
  await q(
    "INSERT INTO signals (layout_id, signal_id, name, line_id, at, aspects, position)",
    file.signals.map((s, i) => [layoutId, s.id, s.name, s.line, s.at, JSON.stringify(s.aspects), i]),
  );
  await q(
    "INSERT INTO points (layout_id, points_id, name, line_id, at, position)",
    file.points.map((p, i) => [layoutId, p.id, p.name, p.line, p.at, i]),
  );
  await q(
    "INSERT INTO nodes (layout_id, node_id, name, detectors, signals, position)",
    file.nodes.map((n, i) => [layoutId, n.id, n.name, JSON.stringify(n.detectors), JSON.stringify(n.signals), i]),
  );
}

type Row = Record<string, unknown>;

async function readParts(deps: AppDeps, layoutId: number) {
  const select = (sql: string) => deps.db.sequelize.query<Row>(sql, { replacements: { layoutId }, type: QueryTypes.SELECT });
  const [lines, detectors, signals, points, nodes] = await Promise.all([
    select("SELECT line_id AS id, name FROM lines WHERE layout_id = :layoutId ORDER BY position"),
    select("SELECT detector_id AS id, name, line_id AS line, at FROM detectors WHERE layout_id = :layoutId ORDER BY position"),
    select("SELECT signal_id AS id, name, line_id AS line, at, aspects FROM signals WHERE layout_id = :layoutId ORDER BY position"),
    select("SELECT points_id AS id, name, line_id AS line, at FROM points WHERE layout_id = :layoutId ORDER BY position"),
    select("SELECT node_id AS id, name, detectors, signals FROM nodes WHERE layout_id = :layoutId ORDER BY position"),
  ]);
  return {
    lines: lines as unknown as LayoutFile["lines"],
    detectors: detectors as unknown as LayoutFile["detectors"],
    signals: signals as unknown as LayoutFile["signals"],
    points: points as unknown as LayoutFile["points"],
    nodes: nodes as unknown as NodeDto[],
  };
}

export async function liveRulebookVersion(deps: AppDeps, layout: Layout) {
  if (layout.liveVersion === null) return null;
  return deps.db.models.RulebookVersion.findOne({ where: { layoutId: layout.id, version: layout.liveVersion } });
}

/** The layout file as it stands, with the live rulebook; node secrets never leave. */
export async function exportLayout(deps: AppDeps, slug: string): Promise<LayoutFile> {
  const layout = await findLayout(deps, slug);
  const parts = await readParts(deps, layout.id);
  const live = await liveRulebookVersion(deps, layout);
  const file: LayoutFile = {
    format: LAYOUT_FORMAT,
    slug: layout.slug,
    name: layout.name,
    scale: { name: layout.scaleName, ratio: layout.scaleRatio },
    ...parts,
    ...(layout.schematic ? { schematic: layout.schematic } : {}),
    rulebook: live!.rulebook,
  };
  return file;
}

export async function listLayouts(deps: AppDeps): Promise<LayoutSummary[]> {
  const rows = await deps.db.sequelize.query<Row>(
    `SELECT l.slug, l.name, l.scale_name, l.scale_ratio, l.live_version,
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
    detectorCount: r.detector_count as number,
    signalCount: r.signal_count as number,
    nodeCount: r.node_count as number,
  }));
}

export async function listVersions(deps: AppDeps, layout: Layout): Promise<RulebookVersionSummary[]> {
  const rows = await deps.db.sequelize.query<Row>(
    `SELECT v.version, v.status, v.note, v.created_at, u.name AS author
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
  }));
}

export async function layoutDetail(deps: AppDeps, slug: string): Promise<LayoutDetail> {
  const layout = await findLayout(deps, slug);
  const [parts, versions] = await Promise.all([readParts(deps, layout.id), listVersions(deps, layout)]);
  return {
    slug: layout.slug,
    name: layout.name,
    scale: { name: layout.scaleName, ratio: layout.scaleRatio },
    ...parts,
    schematic: layout.schematic,
    versions,
  };
}

const SECRET_BYTES = 24;

/**
 * Registers a board (or re-issues the secret of an existing one) and returns its MQTT
 * password once; only its SHA-256 digest is kept (server/nodeSecret.ts says why not bcrypt).
 */
export async function registerNode(
  deps: AppDeps,
  slug: string,
  body: { id: string; name: string; detectors: string[]; signals: string[] },
): Promise<{ id: string; secret: string }> {
  const layout = await findLayout(deps, slug);
  const parts = await readParts(deps, layout.id);
  const errors: { path: string; message: string }[] = [];
  const detectorIds = new Set(parts.detectors.map((d) => d.id));
  const signalIds = new Set(parts.signals.map((s) => s.id));
  body.detectors.forEach((d, i) => {
    if (!detectorIds.has(d)) errors.push({ path: `$.detectors[${i}]`, message: `no detector "${d}" on this layout` });
    const other = parts.nodes.find((n) => n.id !== body.id && n.detectors.includes(d));
    if (other) errors.push({ path: `$.detectors[${i}]`, message: `detector "${d}" is already served by node "${other.id}"` });
  });
  body.signals.forEach((s, i) => {
    if (!signalIds.has(s)) errors.push({ path: `$.signals[${i}]`, message: `no signal "${s}" on this layout` });
  });
  if (errors.length) throw new HttpError(400, "invalid_node", "the node names things this layout does not have", errors);

  const secret = randomBytes(SECRET_BYTES).toString("base64url");
  const secretHash = hashNodeSecret(secret);
  await deps.db.sequelize.query(
    `INSERT INTO nodes (layout_id, node_id, name, detectors, signals, secret_hash, position)
     VALUES (:layoutId, :id, :name, :detectors, :signals, :secretHash,
             (SELECT coalesce(max(position) + 1, 0) FROM nodes WHERE layout_id = :layoutId))
     ON CONFLICT (layout_id, node_id) DO UPDATE
       SET name = EXCLUDED.name, detectors = EXCLUDED.detectors, signals = EXCLUDED.signals, secret_hash = EXCLUDED.secret_hash`,
    {
      replacements: {
        layoutId: layout.id,
        id: body.id,
        name: body.name,
        detectors: JSON.stringify(body.detectors),
        signals: JSON.stringify(body.signals),
        secretHash,
      },
    },
  );
  deps.bus.emit("layout.nodes-changed", { layoutId: layout.id, slug });
  return { id: body.id, secret };
}
