/**
 * The live runner's pure core: what one running layout knows (engine state, sequencing per
 * board, session clock, what each board was last told, faults) and the views of it that the
 * shell pushes and serves. No I/O and no clock here: time comes in as `at`.
 */
import type { AlarmKind, LampReportDto, LiveState, LiveUpdate, NodeLiveDto, SessionDto } from "@shared/contract/live";
import { shownAspects, type Change, type EngineFault, type EngineState } from "@shared/rulebook/engine";
import { unreachable } from "@shared/rulebook/kinds";
import type { Aspect, PointsPosition, Rulebook } from "@shared/rulebook/schema";
import type { PendingAudit, PendingEvent, PendingSnapshot, SessionRef } from "../eventLog";
import type { IngestResult, NodeEntry } from "../ingest";
import { emptyTracker, type SeqTracker } from "./sequencer";

export interface CoreOptions {
  /** A session closes after this long with no pulse or command. */
  sessionIdleMs: number;
  /** A snapshot of the engine state every this many engine inputs. */
  snapshotEvery: number;
  /** How long a message ahead of a missing seq waits for it (CONTRACT.md §2: REORDER_WAIT_MS). */
  reorderWaitMs: number;
  /** Power points must be reported where thrown within this long (default POINTS_DETECTION_MS, core/points.ts). */
  pointsDetectionMs?: number;
}

export interface OpenSession {
  ref: SessionRef;
  openedAt: number;
  rulebookVersion: number;
  lastActivity: number;
}

/** The pipeline's own fault (the engine threw): the engine's fault shape. */
export type Fault = EngineFault;

/** A board message waiting in the sequencer: everything needed to store it when released. */
export interface HeldMessage {
  topic: string;
  payload: Buffer;
  receivedAt: number;
  result: IngestResult;
  /** The shell's handle for this message's acknowledgement. */
  ref: number;
}

/** What a board reported it shows (lamp proving), for the mimic. */
export type LampDto = LampReportDto;

export interface Core {
  readonly layoutId: number;
  readonly slug: string;
  readonly options: CoreOptions;
  rulebook: Rulebook;
  rulebookVersion: number;
  state: EngineState;
  nodes: Map<string, NodeEntry>;
  nodeLive: Map<string, NodeLiveDto>;
  seqs: SeqTracker<HeldMessage>;
  session: OpenSession | null;
  since: Record<string, string>;
  inputsSinceSnapshot: number;
  tempKeys: number;
  /** What the boards were last told, per signal. */
  published: Map<string, { aspect: Aspect; rev: number }>;
  /** What the points boards were last told, per power-worked points. */
  pointsSent: Map<string, { to: PointsPosition; rev: number }>;
  /** Throws not yet reported done (core/points.ts). */
  pointsChecks: Map<string, { to: PointsPosition; since: number; alarmed: boolean }>;
  aspectRev: number;
  lamps: Record<string, LampDto>;
  /** The engine threw: everything at danger until a restart command or a new rulebook. */
  pipelineFault: Fault | null;
  /** Commits failing or hanging too long: everything at danger until one succeeds. */
  outage: Fault | null;
}

/** One call's database rows, in order; event indexes in effects point into `events`. */
export interface Rows {
  events: PendingEvent[];
  audits: PendingAudit[];
  sessionOpens: { temp: number; openedAt: number; rulebookVersion: number | null; openedBy: number | null }[];
  sessionCloses: { session: SessionRef; closedAt: number; reason: string }[];
  snapshot: PendingSnapshot | null;
}

/** What the shell does once the rows are committed (never before). */
export type Effect =
  /** Acknowledge a board message / answer a caller; `error` set when it was refused. */
  | { type: "settle"; ref: number; error: string | null }
  /** Push a step to browsers; `event` indexes this call's rows. */
  | { type: "update"; event: number | null; patch: LiveUpdate["patch"] }
  | { type: "alarm"; kind: AlarmKind; subject: string | null; message: string; event: number | null }
  | { type: "clear"; kind: AlarmKind; subject: string | null }
  /** Confirm to a board: every message of `boot` up to `seq` is committed. */
  | { type: "covered"; node: string; boot: string; seq: number }
  /** Danger on every signal now, before any commit (the safe side needs none). */
  | { type: "fail-safe" };

export interface Step {
  core: Core;
  rows: Rows;
  effects: Effect[];
}

export const emptyRows = (): Rows => ({ events: [], audits: [], sessionOpens: [], sessionCloses: [], snapshot: null });
export const iso = (ms: number) => new Date(ms).toISOString();

export function createCore(init: {
  layoutId: number;
  slug: string;
  options: CoreOptions;
  rulebook: Rulebook;
  rulebookVersion: number;
  state: EngineState;
  aspectRev: number;
  since?: Record<string, string>;
}): Core {
  return {
    layoutId: init.layoutId,
    slug: init.slug,
    options: init.options,
    rulebook: init.rulebook,
    rulebookVersion: init.rulebookVersion,
    state: init.state,
    nodes: new Map(),
    nodeLive: new Map(),
    seqs: emptyTracker(),
    session: null,
    since: init.since ?? {},
    inputsSinceSnapshot: 0,
    tempKeys: 0,
    published: new Map(),
    pointsSent: new Map(),
    pointsChecks: new Map(),
    aspectRev: init.aspectRev,
    lamps: {},
    pipelineFault: null,
    outage: null,
  };
}

/** The aspect each signal should show now: the engine's, or danger under any fault. */
export function shownNow(core: Core): Record<string, Aspect> {
  let shown: Record<string, Aspect>;
  try {
    shown = shownAspects(core.rulebook, core.state);
  } catch (err) {
    // Even working out the aspects failed: every signal the boards know goes to danger.
    core.pipelineFault ??= { reason: `the rulebook engine failed: ${(err as Error).message}`, at: core.state.clock };
    shown = Object.fromEntries([...core.published.keys()].map((signal) => [signal, "danger" as Aspect]));
  }
  if (core.pipelineFault || core.outage) for (const signal of Object.keys(shown)) shown[signal] = "danger";
  return shown;
}

/**
 * Every signal whose aspect differs from what its board was last told, each with a new rev;
 * `all` commands every signal again with a new rev (on starting to run, after a reconnect),
 * so boards that went to danger on a fault may leave it.
 */
export function aspectCommands(core: Core, all = false): { signal: string; aspect: Aspect; rev: number }[] {
  const shown = shownNow(core);
  for (const signal of core.published.keys()) if (!(signal in shown)) shown[signal] = "danger"; // dropped by a new rulebook
  const out: { signal: string; aspect: Aspect; rev: number }[] = [];
  for (const [signal, aspect] of Object.entries(shown)) {
    if (!all && core.published.get(signal)?.aspect === aspect) continue;
    const rev = ++core.aspectRev;
    core.published.set(signal, { aspect, rev });
    out.push({ signal, aspect, rev });
  }
  return out;
}

/**
 * The rev stored with each commit is ahead of what will be published before the next one
 * (every signal at most twice: a change and a fail-safe or reconnect round), so a restart
 * never reuses a rev a board has already seen.
 */
export function revReservation(core: Core): number {
  const points = Object.keys(core.state.thrown ?? {}).length + core.pointsSent.size;
  return core.aspectRev + 4 * (Object.keys(shownNow(core)).length + core.published.size + points) + 4;
}

export function faultedDto(core: Core): LiveState["faulted"] {
  const fault = core.pipelineFault ?? core.outage ?? core.state.faulted;
  return fault ? { reason: fault.reason, at: iso(fault.at) } : null;
}

export function sessionDto(core: Core): SessionDto | null {
  if (!core.session) return null;
  return {
    id: "id" in core.session.ref ? core.session.ref.id : 0,
    openedAt: iso(core.session.openedAt),
    closedAt: null,
    rulebookVersion: core.session.rulebookVersion,
  };
}

export function summary(core: Core) {
  return { shown: shownNow(core), latches: core.state.latches, counters: core.state.counters, selectors: core.state.selectors, held: core.state.held };
}

export function noteSince(core: Core, changes: Change[], at: string): void {
  for (const change of changes) {
    if (change.kind === "latch" || change.kind === "counter" || change.kind === "selector") core.since[`${change.kind}:${change.name}`] = at;
    else if (change.kind === "shown") core.since[`signal:${change.name}`] = at;
  }
}

export function quietDto(core: Core): Record<string, string> {
  return Object.fromEntries(Object.entries(core.state.quiet).map(([rule, deadline]) => [rule, iso(deadline)]));
}

/** Every node of the layout, offline until it has said otherwise. */
export function nodesDto(core: Core): Record<string, NodeLiveDto> {
  const nodes: Record<string, NodeLiveDto> = {};
  for (const id of core.nodes.keys()) nodes[id] = core.nodeLive.get(id) ?? { online: false, since: null, boot: null, fw: null };
  return nodes;
}

export function patchFor(core: Core, changes: Change[], at: string): LiveUpdate["patch"] {
  noteSince(core, changes, at);
  const patch: LiveUpdate["patch"] = {};
  for (const change of changes) {
    switch (change.kind) {
      case "latch":
        patch.latches = core.state.latches;
        break;
      case "counter":
        patch.counters = core.state.counters;
        break;
      case "selector":
        patch.selectors = core.state.selectors;
        break;
      case "quiet":
        patch.quiet = quietDto(core);
        break;
      case "points":
        patch.points = pointsDto(core);
        break;
      case "throw":
        patch.thrown = { ...core.state.thrown };
        break;
      case "shown":
      case "held":
      case "fault":
      case "wanted":
        patch.shown = shownNow(core);
        patch.held = core.state.held;
        patch.faulted = faultedDto(core);
        break;
      case "alarm":
        // Alarms reach the state through the alarm port, not the patch.
        break;
      default:
        unreachable(change);
    }
  }
  if (changes.length > 0) patch.since = core.since;
  return patch;
}

/** Every field of the live state but slug, version and alarms, as it stands in memory. */
export function fullPatch(core: Core): Required<Omit<LiveUpdate["patch"], "alarms" | "stale">> {
  return {
    rulebookVersion: core.rulebookVersion,
    session: sessionDto(core),
    shown: shownNow(core),
    latches: core.state.latches,
    counters: core.state.counters,
    selectors: core.state.selectors,
    held: core.state.held,
    quiet: quietDto(core),
    faulted: faultedDto(core),
    nodes: nodesDto(core),
    since: { ...core.since },
    lamps: { ...core.lamps },
    points: pointsDto(core),
    thrown: { ...(core.state.thrown ?? {}) },
  };
}

/** Where each points lie as last reported (a board reports only normal, reverse or moving). */
export function pointsDto(core: Core): NonNullable<LiveState["points"]> {
  return { ...(core.state.points ?? {}) } as NonNullable<LiveState["points"]>;
}
