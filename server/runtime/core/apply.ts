/**
 * `apply(core, input, at) → { core, rows, effects }`: the live runner's decisions as a pure
 * step (STYLE.md: effects returned as data, run by the shell after the commit). The core is
 * handed over and handed back: the caller uses the returned one and drops the old.
 */
import type { CommandBody } from "@shared/contract/live";
import { ALARM_KIND } from "@shared/contract/alarmKinds";
import { initialState, signalIds, type EngineInput } from "@shared/rulebook/engine";
import type { Rulebook } from "@shared/rulebook/schema";
import type { Batch } from "../eventLog";
import { applyDecisions, applyMessage } from "./messages";
import { expirePointsChecks, nextPointsDue } from "./points";
import { closeIfIdle, ensureSession, newEvent, runEngine } from "./record";
import { expire, nextExpiry } from "./sequencer";
import { emptyRows, fullPatch, revReservation, summary, type Core, type HeldMessage, type Step } from "./state";

export interface CommandUser {
  id: number;
  name: string;
}

export type CoreInput =
  | { type: "message"; message: HeldMessage; retain: boolean }
  /** The clock: quiet triggers, reorder waits and idle sessions that are due at `at`. */
  | { type: "tick" }
  | { type: "command"; body: CommandBody; user: CommandUser; ref: number }
  | { type: "switch"; version: number; rulebook: Rulebook; userId: number | null; ref: number }
  | { type: "session"; action: "open" | "close"; user: CommandUser; ref: number };

export function apply(core: Core, input: CoreInput, at: number): Step {
  const out: Step = { core, rows: emptyRows(), effects: [] };
  switch (input.type) {
    case "message":
      applyMessage(core, input.message, input.retain, at, out);
      break;
    case "tick":
      applyTick(core, at, out);
      break;
    case "command":
      applyCommand(core, input, at, out);
      break;
    case "switch":
      applySwitch(core, input, at, out);
      break;
    case "session":
      applySession(core, input, at, out);
      break;
  }
  return out;
}

function applyTick(core: Core, at: number, out: Step): void {
  closeIfIdle(core, at, out);
  applyDecisions(core, expire(core.seqs, at, core.options.reorderWaitMs), out);
  expirePointsChecks(core, at, out);
  if (core.pipelineFault || core.state.faulted) return;
  const due = Object.values(core.state.quiet).some((deadline) => deadline <= at);
  if (!due) return;
  const input: EngineInput = { type: "tick", at };
  runEngine(core, input, newEvent(core, { kind: "tick", status: "accepted", receivedAt: at, input }), out);
}

function commandInput(body: CommandBody, at: number, by: string): EngineInput {
  switch (body.type) {
    case "hold":
    case "release":
      return { type: "command", at, command: body.type, signal: body.signal, by, reason: body.reason };
    case "set":
    case "clear":
      return { type: "command", at, command: body.type, latch: body.latch, by, reason: body.reason };
    case "zero":
      return { type: "command", at, command: "zero", counter: body.counter, by, reason: body.reason };
    case "restart":
      return { type: "command", at, command: "restart", by, reason: body.reason };
  }
}

function applyCommand(core: Core, item: Extract<CoreInput, { type: "command" }>, at: number, out: Step): void {
  const body = item.body;
  const input = commandInput(body, at, item.user.name);
  ensureSession(core, at, item.user.id, out);
  const before = summary(core);
  if (body.type === "restart" && core.pipelineFault) {
    core.pipelineFault = null;
    out.effects.push({ type: "clear", kind: ALARM_KIND.rulebook, subject: "pipeline" });
  }
  const event = newEvent(core, { kind: "command", status: "accepted", receivedAt: at, userId: item.user.id, input });
  const index = runEngine(core, input, event, out);
  const target = "signal" in body ? `signal ${body.signal}` : "latch" in body ? `latch ${body.latch}` : "counter" in body ? `counter ${body.counter}` : "rulebook";
  out.rows.audits.push({ userId: item.user.id, action: `command-${body.type}`, target, reason: body.reason, before, after: summary(core) });
  const error = index === -1 ? (core.pipelineFault?.reason ?? "the command could not be applied") : null;
  out.effects.push({ type: "settle", ref: item.ref, error });
}

function applySwitch(core: Core, item: Extract<CoreInput, { type: "switch" }>, at: number, out: Step): void {
  const before = { rulebookVersion: core.rulebookVersion, ...summary(core) };
  const held = core.state.held;
  core.rulebook = item.rulebook;
  core.rulebookVersion = item.version;
  let state = initialState(core.rulebook, Math.max(at, core.state.clock));
  // A signaller's hold survives a new rulebook: only `release` lifts it.
  const keep = held.filter((signal) => signalIds(core.rulebook).includes(signal));
  if (keep.length) state = { ...state, held: keep };
  core.state = state;
  core.pipelineFault = null;
  core.inputsSinceSnapshot = 0;
  out.rows.snapshot = { rulebookVersion: item.version, session: core.session?.ref ?? null, state: snapshotState(core) };
  out.rows.audits.push({
    userId: item.userId,
    action: "live-rulebook-switched",
    target: `version ${item.version}`,
    reason: "a new rulebook version was published: the live layout restarts from its initial state",
    before,
    after: { rulebookVersion: item.version, ...summary(core) },
  });
  out.effects.push({ type: "update", event: null, patch: fullPatch(core) });
  out.effects.push({ type: "settle", ref: item.ref, error: null });
}

function applySession(core: Core, item: Extract<CoreInput, { type: "session" }>, at: number, out: Step): void {
  if (item.action === "open") {
    if (!core.session) ensureSession(core, at, item.user.id, out);
  } else if (core.session) {
    out.rows.sessionCloses.push({ session: core.session.ref, closedAt: at, reason: `closed by ${item.user.name}` });
    core.session = null;
    out.effects.push({ type: "update", event: null, patch: { session: null } });
  }
  out.rows.audits.push({ userId: item.user.id, action: `session-${item.action}`, target: null, reason: null, before: null, after: null });
  out.effects.push({ type: "settle", ref: item.ref, error: null });
}

export function snapshotState(core: Core) {
  return { engine: core.state, since: core.since };
}

/** Closes a batch of steps: a snapshot when one is due, and the aspect rev to store with it. */
export function finishBatch(core: Core, batch: Batch): void {
  if (core.inputsSinceSnapshot >= core.options.snapshotEvery && !batch.snapshot) {
    batch.snapshot = { rulebookVersion: core.rulebookVersion, session: core.session?.ref ?? null, state: snapshotState(core) };
    core.inputsSinceSnapshot = 0;
  }
  const empty = batch.events.length + batch.audits.length + batch.sessionOpens.length + batch.sessionCloses.length === 0 && !batch.snapshot;
  if (!empty) batch.aspectRev = revReservation(core);
}

/** When the clock next has something to do (quiet trigger, reorder wait, idle session), or null. */
export function nextDue(core: Core): number | null {
  const dues: number[] = [];
  const quiet = Object.values(core.state.quiet);
  if (quiet.length > 0 && !core.state.faulted && !core.pipelineFault) dues.push(Math.min(...quiet));
  const expiry = nextExpiry(core.seqs, core.options.reorderWaitMs);
  if (expiry !== null) dues.push(expiry);
  if (core.session) dues.push(core.session.lastActivity + core.options.sessionIdleMs);
  const points = nextPointsDue(core);
  if (points !== null) dues.push(points);
  return dues.length ? Math.min(...dues) : null;
}

/** Commits have failed or hung too long: fail-safe. Returns true when this is news. */
export function declareOutage(core: Core, reason: string, at: number): boolean {
  if (core.outage) return false;
  core.outage = { reason, at };
  return true;
}

/** A commit went through: the outage is over. Returns true when there was one. */
export function endOutage(core: Core): boolean {
  if (!core.outage) return false;
  core.outage = null;
  return true;
}

/** Rows of several steps as one batch (indexes of later steps shift by the rows before them). */
export function appendStep(batch: Batch, step: Step): number {
  const offset = batch.events.length;
  batch.events.push(...step.rows.events);
  batch.audits.push(...step.rows.audits);
  batch.sessionOpens.push(...step.rows.sessionOpens);
  batch.sessionCloses.push(...step.rows.sessionCloses);
  if (step.rows.snapshot) batch.snapshot = step.rows.snapshot;
  return offset;
}
