/**
 * Recovery: the core of a layout as it stood before the process stopped or crashed — the
 * latest snapshot of the live rulebook version, then every later accepted engine input
 * replayed through `step`; the open session; each node's status and each boot's position
 * (so a resent message is told apart as duplicate or late, and `applied` can be confirmed).
 */
import { initialState, step } from "@shared/rulebook/engine";
import type { Rulebook } from "@shared/rulebook/schema";
import { acceptedInputs, bootPositions, emptyBatch, lastNodeStatus, latestSnapshot, openSession, type Batch, type Query } from "./eventLog";
import type { NodeEntry } from "./ingest";
import { snapshotState } from "./core/apply";
import { noteSince, createCore, iso, type Core, type CoreOptions } from "./core/state";
import { BOOTS_KEPT_PER_NODE, restoreBoot } from "./core/sequencer";

/** The boards of a layout, as ingest checks them. A `points` column is read when the schema has one. */
export async function loadNodes(query: Query, layoutId: number): Promise<Map<string, NodeEntry>> {
  const rows = await query<{ node_id: string; detectors: string[]; signals: string[]; points: string[] | null }>(
    `SELECT node_id, detectors, signals, to_jsonb(n) -> 'points' AS points FROM nodes n WHERE layout_id = $1`,
    [layoutId],
  );
  return new Map(
    rows.map((r) => [
      r.node_id,
      { detectors: new Set(r.detectors), signals: new Set(r.signals), ...(Array.isArray(r.points) ? { points: new Set(r.points) } : {}) },
    ]),
  );
}

export async function recoverCore(
  query: Query,
  layout: { id: number; slug: string },
  options: CoreOptions,
  now: number,
): Promise<{ core: Core; batch: Batch | null }> {
  const [row] = await query<{ live_version: number; aspect_rev: string }>(`SELECT live_version, aspect_rev FROM layouts WHERE id = $1`, [layout.id]);
  const version = row.live_version;
  const [rb] = await query<{ rulebook: Rulebook }>(`SELECT rulebook FROM rulebook_versions WHERE layout_id = $1 AND version = $2`, [layout.id, version]);
  const base = { layoutId: layout.id, slug: layout.slug, options, rulebook: rb.rulebook, rulebookVersion: version, aspectRev: Number(row.aspect_rev) };

  const snap = await latestSnapshot(query, layout.id);
  let core: Core;
  let batch: Batch | null = null;
  if (snap && snap.rulebook_version === version) {
    core = createCore({ ...base, state: snap.state.engine, since: snap.state.since ?? {} });
    for await (const input of acceptedInputs(query, { layoutId: layout.id }, snap.last_event_id)) {
      const result = step(core.rulebook, core.state, input);
      core.state = result.state;
      noteSince(core, result.changes, iso(input.at));
      core.inputsSinceSnapshot++;
    }
  } else {
    // First start of this layout, or a rulebook published while no runtime ran.
    core = createCore({ ...base, state: initialState(rb.rulebook, now) });
    batch = emptyBatch(layout.id);
    batch.snapshot = { rulebookVersion: version, session: null, state: snapshotState(core) };
    if (snap) {
      batch.audits.push({
        userId: null,
        action: "live-rulebook-switched",
        target: `version ${version}`,
        reason: "the live runtime started on a newly published rulebook: initial state",
        before: { rulebookVersion: snap.rulebook_version },
        after: { rulebookVersion: version },
      });
    }
  }

  core.nodes = await loadNodes(query, layout.id);
  const session = await openSession(query, layout.id);
  if (session) {
    core.session = {
      ref: { id: session.id },
      openedAt: new Date(session.opened_at).getTime(),
      rulebookVersion: session.rulebook_version ?? version,
      lastActivity: new Date(session.last ?? session.opened_at).getTime(),
    };
  }
  for (const p of await bootPositions(query, layout.id, BOOTS_KEPT_PER_NODE)) restoreBoot(core.seqs, p.node, p.boot, p.maxSeq + 1, p.gaps, p.ended);
  for (const r of await lastNodeStatus(query, layout.id)) {
    if (!r.input) continue;
    core.nodeLive.set(r.node_id, { online: r.input.online, since: new Date(r.received_at).toISOString(), boot: r.input.boot ?? null, fw: r.input.fw ?? null });
  }
  return { core, batch };
}
