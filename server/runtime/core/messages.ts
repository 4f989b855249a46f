/**
 * Board messages in the core: status and lamp-proving reports are stored as they come;
 * pulses and points reports (numbered per boot) go through the sequencer and are stored —
 * applied, duplicate, late or rejected — strictly in seq order (CONTRACT.md §2).
 */
import { MAX_SEQ_AHEAD, type NodeLiveDto } from "@shared/contract/live";
import { ALARM_KIND } from "@shared/contract/alarmKinds";
import type { EngineInput } from "@shared/rulebook/engine";
import type { PendingEvent } from "../eventLog";
import { covered, offer, tooFarAhead, type SeqDecision } from "./sequencer";
import { ensureSession, newEvent, record, runEngine } from "./record";
import { iso, type Core, type HeldMessage, type Step } from "./state";

/** Raw payloads of refused messages are kept up to this many characters. */
export const RAW_KEEP_CHARS = 2048;

/**
 * The payload as text that PostgreSQL can store: bytes that are not UTF-8 become U+FFFD,
 * NUL and other control characters are written as `\u0000`-style escapes.
 */
export function storableText(payload: Buffer, keep = RAW_KEEP_CHARS): string {
  let text = payload.toString("utf8");
  if (text.length > keep) text = text.slice(0, keep) + "…";
  return text.replace(/[\u0000-\u0008\u000b\u000c\u000e-\u001f\u007f]/g, (c) => `\\u${c.charCodeAt(0).toString(16).padStart(4, "0")}`);
}

/** The seq, boot and kind a message is numbered with, if it is a pulse or points report we can place. */
function numbering(m: HeldMessage): { node: string; boot: string; seq: number; kind: "pulse" | "points" } | null {
  const r = m.result;
  if (r.ok) return r.kind === "pulse" || r.kind === "points" ? { node: r.node, boot: r.payload.boot, seq: r.payload.seq, kind: r.kind } : null;
  if ((r.kind === "pulse" || r.kind === "points") && r.node && r.boot !== undefined && r.seq !== undefined) return { node: r.node, boot: r.boot, seq: r.seq, kind: r.kind };
  return null;
}

function baseEvent(core: Core, m: HeldMessage, status: PendingEvent["status"], reason: string | null): PendingEvent {
  const r = m.result;
  const n = numbering(m);
  const event = newEvent(core, { kind: r.kind, status, reason, node: r.node, receivedAt: m.receivedAt, topic: m.topic });
  if (n) {
    event.boot = n.boot;
    event.seq = n.seq;
  }
  if (r.ok && r.kind === "pulse") {
    event.detector = r.payload.detector;
    event.boardT = r.payload.t ?? null;
  } else if (r.ok && r.kind === "points") {
    // Stored as the engine input it is (recovery and replay read it back as such).
    event.input = { type: "points", points: r.payload.points, lies: r.payload.lies, at: m.receivedAt };
    event.boardT = r.payload.t ?? null;
  } else if (!r.ok) {
    event.detector = r.detector ?? null;
    event.rawPayload = storableText(m.payload);
  }
  return event;
}

/** One board message arriving at `at` (its receipt time is `m.receivedAt`). */
export function applyMessage(core: Core, m: HeldMessage, retain: boolean, at: number, out: Step): void {
  const r = m.result;
  const n = numbering(m);
  if (n) {
    if (tooFarAhead(core.seqs, n.node, n.boot, n.seq, MAX_SEQ_AHEAD)) {
      record(out, baseEvent(core, m, "rejected", `seq ${n.seq} is more than ${MAX_SEQ_AHEAD} ahead of boot ${n.boot}'s position: not waited for`));
      out.effects.push({ type: "settle", ref: m.ref, error: null });
      return;
    }
    const decisions = offer(core.seqs, n.node, n.boot, n.seq, m, at);
    applyDecisions(core, decisions, out);
    return;
  }
  out.effects.push({ type: "settle", ref: m.ref, error: null });
  if (!r.ok) {
    record(out, baseEvent(core, m, "rejected", r.reason));
    return;
  }
  if (r.kind === "status") {
    const p = r.payload;
    const before = core.nodeLive.get(r.node);
    // A retained status we already know (seen again on resubscribe) is not news.
    if (retain && before && before.online === p.online && before.boot === (p.boot ?? null)) return;
    const live: NodeLiveDto = { online: p.online, since: iso(m.receivedAt), boot: p.boot ?? null, fw: p.fw ?? null };
    core.nodeLive.set(r.node, live);
    const event = newEvent(core, { kind: "status", status: "accepted", node: r.node, boot: p.boot ?? null, receivedAt: m.receivedAt, topic: m.topic, input: p });
    // node-offline alarms are the watchers' (features/alarms/watchers.ts), after their delay.
    record(out, event, { nodes: Object.fromEntries(core.nodeLive) });
    return;
  }
  if (r.kind === "shown") {
    // Lamp proving: the board reports what it shows; it must be what we last commanded.
    const p = r.payload;
    core.lamps[p.signal] = { aspect: p.aspect, rev: p.rev, at: iso(m.receivedAt) };
    const commanded = core.published.get(p.signal);
    const event = newEvent(core, { kind: "shown", status: "accepted", node: r.node, receivedAt: m.receivedAt, topic: m.topic, input: p });
    const patch = { lamps: { ...core.lamps } };
    if (commanded && p.rev >= commanded.rev) {
      if (p.aspect !== commanded.aspect) {
        event.reason = `lamp proving: shows ${p.aspect}, commanded ${commanded.aspect} (rev ${commanded.rev})`;
        const index = record(out, event, patch);
        const message = `signal ${p.signal} shows ${p.aspect} but was commanded ${commanded.aspect}`;
        out.effects.push({ type: "alarm", kind: ALARM_KIND.lampProving, subject: p.signal, message, event: index });
        return;
      }
      out.effects.push({ type: "clear", kind: ALARM_KIND.lampProving, subject: p.signal });
    } else if (commanded) {
      event.reason = `report for rev ${p.rev}, older than the latest command (rev ${commanded.rev}): not compared`;
    }
    record(out, event, patch);
  }
}

/** Stores what the sequencer decided, in order, and confirms each boot it touched. */
export function applyDecisions(core: Core, decisions: SeqDecision<HeldMessage>[], out: Step): void {
  const touched = new Map<string, { node: string; boot: string }>();
  let pendingMissed: { node: string; message: string }[] = [];
  for (const d of decisions) {
    touched.set(`${d.node}\u0000${d.boot}`, { node: d.node, boot: d.boot });
    switch (d.type) {
      case "wait":
        break;
      case "missed": {
        const count = d.to - d.from + 1;
        const range = count === 1 ? `seq ${d.from}` : `seqs ${d.from}–${d.to}`;
        const why =
          d.why === "timeout" ? `not received within ${core.options.reorderWaitMs} ms` : d.why === "new-boot" ? "the board started a new boot" : "too many messages waiting";
        pendingMissed.push({ node: d.node, message: `node "${d.node}" boot ${d.boot}: ${range} missed (${count} pulse(s) or points report(s); ${why})` });
        break;
      }
      case "duplicate":
        record(out, baseEvent(core, d.message, "duplicate", `seq ${d.seq} of boot ${d.boot} is stored already`));
        out.effects.push({ type: "settle", ref: d.message.ref, error: null });
        break;
      case "late":
        record(out, baseEvent(core, d.message, "late", `late: ${d.why}; not applied`));
        out.effects.push({ type: "settle", ref: d.message.ref, error: null });
        break;
      case "release": {
        const index = applyReleased(core, d.message, out);
        for (const missed of pendingMissed) out.effects.push({ type: "alarm", kind: ALARM_KIND.missedPulses, subject: missed.node, message: missed.message, event: index });
        pendingMissed = [];
        out.effects.push({ type: "settle", ref: d.message.ref, error: null });
        break;
      }
    }
  }
  for (const missed of pendingMissed) out.effects.push({ type: "alarm", kind: ALARM_KIND.missedPulses, subject: missed.node, message: missed.message, event: null });
  for (const { node, boot } of touched.values()) out.effects.push({ type: "covered", node, boot, seq: covered(core.seqs, node, boot) });
}

/** A numbered message whose turn has come: applied (or stored as rejected). Returns its event index. */
function applyReleased(core: Core, m: HeldMessage, out: Step): number {
  const r = m.result;
  if (!r.ok) return record(out, baseEvent(core, m, "rejected", r.reason));
  ensureSession(core, m.receivedAt, null, out);
  if (core.pipelineFault) return record(out, baseEvent(core, m, "rejected", `not applied: ${core.pipelineFault.reason}`));
  if (r.kind === "points") {
    // A points report is an engine input like a pulse (blocklight.rulebook/2: `moved`, `points … lies`).
    const input: EngineInput = { type: "points", points: r.payload.points, lies: r.payload.lies, at: m.receivedAt };
    return runEngine(core, input, baseEvent(core, m, "accepted", null), out);
  }
  if (r.kind !== "pulse") return record(out, baseEvent(core, m, "rejected", "not a numbered message"));
  const input: EngineInput = { type: "pulse", detector: r.payload.detector, at: m.receivedAt };
  return runEngine(core, input, baseEvent(core, m, "accepted", null), out);
}
