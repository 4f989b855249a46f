/**
 * A layout's records (lines, detectors, signals, points, nodes) read and written through the
 * Sequelize models, in the author's order (`position`). Node secrets stay where they are:
 * saving the records updates a board's name and wiring but never its secret hash.
 */
import type { Transaction } from "sequelize";
import type { NodeDto } from "@shared/contract/rest";
import type { LayoutDetector, LayoutLine, LayoutPoints, LayoutRecords, LayoutSignal } from "@shared/layout/schema";
import type { AppDeps } from "../deps";

export interface RecordLists {
  lines: LayoutLine[];
  detectors: LayoutDetector[];
  signals: LayoutSignal[];
  points: (LayoutPoints & { worked: "power" | "hand" })[];
  nodes: NodeDto[];
}

export async function readRecords(deps: AppDeps, layoutId: number, transaction?: Transaction): Promise<RecordLists> {
  const { LineRecord, DetectorRecord, SignalRecord, PointsRecord, NodeRecord } = deps.db.models;
  const query = { where: { layoutId }, order: [["position", "ASC"]] as [string, string][], transaction };
  const [lines, detectors, signals, points, nodes] = await Promise.all([
    LineRecord.findAll(query),
    DetectorRecord.findAll(query),
    SignalRecord.findAll(query),
    PointsRecord.findAll(query),
    NodeRecord.findAll(query),
  ]);
  return {
    lines: lines.map((l) => ({ id: l.lineId, name: l.name })),
    detectors: detectors.map((d) => ({ id: d.detectorId, name: d.name, line: d.lineId, at: d.at })),
    signals: signals.map((s) => ({ id: s.signalId, name: s.name, line: s.lineId, at: s.at, aspects: s.aspects })),
    points: points.map((p) => ({ id: p.pointsId, name: p.name, line: p.lineId, at: p.at, worked: p.worked })),
    nodes: nodes.map((n) => ({ id: n.nodeId, name: n.name, detectors: n.detectors, signals: n.signals, points: n.points })),
  };
}

/**
 * Replaces the records of a layout with `records` inside `transaction`. Lines, detectors,
 * signals and points are rewritten; nodes are matched by id so a board that stays keeps its
 * secret, a new one has none until it is registered, and a removed one is deleted.
 */
export async function writeRecords(deps: AppDeps, layoutId: number, records: Omit<LayoutRecords, "format" | "slug" | "name" | "scale">, transaction: Transaction): Promise<void> {
  const { LineRecord, DetectorRecord, SignalRecord, PointsRecord, NodeRecord } = deps.db.models;
  const where = { layoutId };
  // One after another: a transaction is one connection, and pg refuses overlapping queries on one.
  for (const model of [LineRecord, DetectorRecord, SignalRecord, PointsRecord]) await (model as typeof LineRecord).destroy({ where, transaction });
  await LineRecord.bulkCreate(records.lines.map((l, position) => ({ layoutId, lineId: l.id, name: l.name, position })), { transaction });
  await DetectorRecord.bulkCreate(
    records.detectors.map((d, position) => ({ layoutId, detectorId: d.id, name: d.name, lineId: d.line, at: d.at, position })),
    { transaction },
  );
  await SignalRecord.bulkCreate(
    records.signals.map((s, position) => ({ layoutId, signalId: s.id, name: s.name, lineId: s.line, at: s.at, aspects: s.aspects, position })),
    { transaction },
  );
  await PointsRecord.bulkCreate(
    records.points.map((p, position) => ({ layoutId, pointsId: p.id, name: p.name, lineId: p.line, at: p.at, worked: p.worked ?? "hand", position })),
    { transaction },
  );

  const existing = new Map((await NodeRecord.findAll({ where, transaction })).map((n) => [n.nodeId, n]));
  const kept = new Set<string>();
  for (const [position, node] of records.nodes.entries()) {
    kept.add(node.id);
    const values = { name: node.name, detectors: node.detectors, signals: node.signals, points: node.points ?? [], position };
    const row = existing.get(node.id);
    if (row) await row.update(values, { transaction });
    else await NodeRecord.create({ layoutId, nodeId: node.id, ...values }, { transaction });
  }
  const removed = [...existing.keys()].filter((id) => !kept.has(id));
  if (removed.length > 0) await NodeRecord.destroy({ where: { layoutId, nodeId: removed }, transaction });
}
