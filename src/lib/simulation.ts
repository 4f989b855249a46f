/**
 * Pure helpers behind the simulator page: the history of engine states, reading input
 * lists (typed, uploaded or carried in a `?trace=` link) and plain-words explanations.
 * The engine itself is `shared/rulebook/engine.ts`, the same one the live runtime runs.
 */
import { initialStep, step, type Change, type EngineInput, type EngineState } from "@shared/rulebook/engine";
import { replayCounterexample, type Move, type TrainView } from "@shared/rulebook/prove";
import { POINTS_LIES, type PointsLie, type ProvingRoute } from "@shared/rulebook/schema";
import type { Rulebook } from "@shared/rulebook/schema";
import { unreachable } from "@shared/rulebook/kinds";
import { formatClock } from "./format";

/** One point in the simulation: the input that led here and what it changed. */
export interface SimEntry {
  /** Plain words for the input, e.g. "Pulse at MA". */
  label: string;
  input: EngineInput | null;
  state: EngineState;
  changes: Change[];
  /** Set for prover counterexample steps: the properties this step visibly breaks. */
  violates?: string[];
  /** Set for prover counterexample steps: where each train of the replay is. */
  trains?: TrainView[];
}

export function startEntry(rulebook: Rulebook): SimEntry {
  const { state, changes } = initialStep(rulebook, 0);
  return { label: "Start: initial values, then settle", input: null, state, changes };
}

export function applyInput(rulebook: Rulebook, from: EngineState, input: EngineInput): SimEntry {
  const { state, changes } = step(rulebook, from, input);
  return { label: describeInput(input), input, state, changes };
}

export function describeInput(input: EngineInput, when?: string): string {
  const at = when ?? formatClock(input.at);
  switch (input.type) {
    case "pulse":
      return `Pulse at ${input.detector} (${at})`;
    case "tick":
      return `Clock to ${at}`;
    case "points":
      return `Points ${input.points} reported ${input.lies} (${at})`;
    case "command":
      switch (input.command) {
        case "hold":
        case "release":
          return `${input.command === "hold" ? "Hold" : "Release"} ${input.signal} (${at})`;
        case "set":
        case "clear":
          return `${input.command === "set" ? "Set" : "Clear"} latch ${input.latch} (${at})`;
        case "zero":
          return `Zero counter ${input.counter} (${at})`;
        case "restart":
          return `Restart (${at})`;
      }
  }
}

function describeMove(move: Move): string {
  switch (move.type) {
    case "arrive":
      return `Train arrives on route ${move.route} (${move.axles} ${move.axles === 1 ? "axle" : "axles"})`;
    case "pulse":
      return `Train ${move.train} (route ${move.route}) pulses ${move.detector}`;
    case "quiet":
      return `Quiet trigger ${move.rule} fires`;
    case "points":
      return `Points ${move.points} reported ${move.lies}`;
  }
}

// ---------------------------------------------------------------------------------------
// Input lists
// ---------------------------------------------------------------------------------------

const isObject = (v: unknown): v is Record<string, unknown> => typeof v === "object" && v !== null && !Array.isArray(v);
const isText = (v: unknown): v is string => typeof v === "string" && v.length > 0;
const isTime = (v: unknown): v is number => typeof v === "number" && Number.isFinite(v) && v >= 0;
const isPointsLie = (v: unknown): v is PointsLie => typeof v === "string" && (POINTS_LIES as readonly string[]).includes(v);

function toEngineInput(item: unknown): EngineInput | null {
  if (!isObject(item) || !isTime(item.at)) return null;
  const reason = typeof item.reason === "string" ? item.reason : undefined;
  if (item.type === "pulse" && isText(item.detector)) return { type: "pulse", detector: item.detector, at: item.at };
  if (item.type === "tick") return { type: "tick", at: item.at };
  if (item.type === "points" && isText(item.points) && isPointsLie(item.lies)) return { type: "points", points: item.points, lies: item.lies, at: item.at };
  if (item.type !== "command") return null;
  switch (item.command) {
    case "hold":
    case "release":
      return isText(item.signal) ? { type: "command", command: item.command, signal: item.signal, at: item.at, reason } : null;
    case "set":
    case "clear":
      return isText(item.latch) ? { type: "command", command: item.command, latch: item.latch, at: item.at, reason } : null;
    case "zero":
      return isText(item.counter) ? { type: "command", command: "zero", counter: item.counter, at: item.at, reason } : null;
    case "restart":
      return { type: "command", command: "restart", at: item.at, reason };
    default:
      return null;
  }
}

function toMove(item: unknown): Move | null {
  if (!isObject(item)) return null;
  if (item.type === "arrive" && isText(item.route) && typeof item.axles === "number") return { type: "arrive", route: item.route, axles: item.axles };
  if (item.type === "pulse" && isText(item.detector) && isText(item.route) && typeof item.train === "number")
    return { type: "pulse", detector: item.detector, route: item.route, train: item.train };
  if (item.type === "quiet" && isText(item.rule)) return { type: "quiet", rule: item.rule };
  if (item.type === "points" && isText(item.points) && isPointsLie(item.lies)) return { type: "points", points: item.points, lies: item.lies };
  return null;
}

/** A list read from a file or link: engine inputs, or a prover counterexample's moves. */
export type InputList = { kind: "inputs"; inputs: EngineInput[] } | { kind: "moves"; moves: Move[] };

/**
 * Accepts `[input…]`, `{"events":[input…]}` (the shape of POST /api/simulate) or a
 * counterexample `[move…]` (CONTRACT.md §5). Throws with the index of the first bad item.
 */
export function parseInputList(value: unknown): InputList {
  const list = Array.isArray(value) ? value : isObject(value) && Array.isArray(value.events) ? value.events : null;
  if (!list) throw new Error("Expected a JSON list of inputs, or an object with an \"events\" list.");
  // Counterexample moves have no times; engine inputs always do.
  const looksLikeMoves = list.length > 0 && list.every((item) => isObject(item) && !("at" in item));
  if (looksLikeMoves) {
    return {
      kind: "moves",
      moves: list.map((item, index) => {
        const move = toMove(item);
        if (!move) throw new Error(`Item ${index} is not a counterexample move: ${JSON.stringify(item)}`);
        return move;
      }),
    };
  }
  return {
    kind: "inputs",
    inputs: list.map((item, index) => {
      const input = toEngineInput(item);
      if (!input) throw new Error(`Item ${index} is not a pulse, tick, points report or command with a time "at": ${JSON.stringify(item)}`);
      return input;
    }),
  };
}

/** Every entry of a run from the start, ready for the history list. */
export function runInputList(rulebook: Rulebook, list: InputList): SimEntry[] {
  const start = startEntry(rulebook);
  if (list.kind === "inputs") {
    const entries = [start];
    for (const input of list.inputs) entries.push(applyInput(rulebook, entries[entries.length - 1].state, input));
    return entries;
  }
  const replay = replayCounterexample(rulebook, list.moves);
  return [
    { ...start, state: replay.initial, violates: replay.initialViolates, trains: [] },
    ...replay.steps.map((s) => ({
      label: describeMove(s.move) + (s.timed ? "" : " (forced: out of timed order)"),
      input: s.input,
      state: s.state,
      changes: s.changes,
      violates: s.violates,
      trains: s.trains,
    })),
  ];
}

/** `?trace=` carries base64 (standard or URL-safe) of UTF-8 JSON. */
export function decodeTrace(encoded: string): unknown {
  const normal = encoded.replace(/-/g, "+").replace(/_/g, "/").replace(/\s/g, "");
  const padded = normal + "=".repeat((4 - (normal.length % 4)) % 4);
  const bytes = Uint8Array.from(atob(padded), (c) => c.charCodeAt(0));
  return JSON.parse(new TextDecoder().decode(bytes));
}

export function encodeTrace(value: unknown): string {
  const bytes = new TextEncoder().encode(JSON.stringify(value));
  let binary = "";
  for (const byte of bytes) binary += String.fromCharCode(byte);
  return btoa(binary).replace(/\+/g, "-").replace(/\//g, "_").replace(/=+$/, "");
}

// ---------------------------------------------------------------------------------------
// Explanations
// ---------------------------------------------------------------------------------------

export function describeChange(change: Change): string {
  const show = (v: unknown) => (v === undefined || v === null ? "—" : typeof v === "string" ? v : JSON.stringify(v));
  switch (change.kind) {
    case "latch":
      return `latch ${change.name} ${change.to ? "set" : "cleared"}`;
    case "counter":
      return `counter ${change.name} ${show(change.from)} → ${show(change.to)}`;
    case "selector":
      return `selector ${change.name} ${show(change.from)} → ${show(change.to)}`;
    case "wanted":
      return `rules ask ${change.name} for ${show(change.to)} (was ${show(change.from)})`;
    case "shown":
      return `${change.name} shows ${show(change.to)} (was ${show(change.from)})`;
    case "held":
      return `${change.name} ${change.to ? "held at danger" : "released"}`;
    case "quiet":
      return change.to === null || change.to === undefined
        ? `quiet trigger ${change.name} disarmed`
        : `quiet trigger ${change.name} armed until ${typeof change.to === "number" ? formatClock(change.to) : show(change.to)}`;
    case "fault":
      return `rulebook faulted${change.detail ? `: ${change.detail}` : ""}`;
    case "alarm":
      return `alarm ${show(change.to)} on ${change.name}${change.detail ? `: ${change.detail}` : ""}`;
    case "points":
      return `points ${change.name} lie ${show(change.to)} (were ${show(change.from)})`;
    case "throw":
      return `points ${change.name} thrown ${show(change.to)}`;
    default:
      return unreachable(change);
  }
}

export function changeCause(change: Change): string {
  if (change.rule) return `rule ${change.rule}`;
  if (change.command) return `command ${change.command}${change.detail && change.kind !== "alarm" ? ` (${change.detail})` : ""}`;
  return "engine";
}

/**
 * Answers "why is M1 at danger?" at a point in the history: a fault or hold first (they
 * override the rules), otherwise the latest change of the aspect the rules ask for.
 */
export function explainSignal(history: SimEntry[], cursor: number, signal: string): string {
  const state = history[cursor].state;
  if (state.faulted) return `Danger because the rulebook is faulted (${state.faulted.reason}); only a restart clears it.`;
  if (state.held.includes(signal)) {
    for (let i = cursor; i >= 0; i--) {
      const hold = history[i].changes.find((c) => c.kind === "held" && c.name === signal && c.to);
      if (hold) return `Danger because a signaller holds it (${history[i].label}).`;
    }
    return "Danger because a signaller holds it.";
  }
  const wanted = state.wanted[signal] ?? "danger";
  for (let i = cursor; i >= 0; i--) {
    const change = [...history[i].changes].reverse().find((c) => c.kind === "wanted" && c.name === signal);
    if (change) return `${wanted[0].toUpperCase()}${wanted.slice(1)}: ${changeCause(change)} asked for it at step ${i} (${history[i].label}).`;
  }
  return `${wanted[0].toUpperCase()}${wanted.slice(1)}: the rulebook's starting aspect; no rule has changed it yet.`;
}

/** A train of a counterexample replay, placed for the mimic and described in words. */
export interface TrainPlacement {
  train: number;
  route: string;
  /** The detector the leading axle crossed last; null while the train is still approaching. */
  detector: string | null;
  /** e.g. "Train 2 on branch, 2 axles: leading axle past BA, BE; last axle past BA". */
  words: string;
}

/** Turns the replay's axle progress into places on the route's path (approach, entry, exits). */
export function placeTrains(trains: readonly TrainView[], routes: readonly ProvingRoute[]): TrainPlacement[] {
  return trains.map((t) => {
    const route = routes.find((r) => r.id === t.route);
    const path = route ? [...route.approach, route.entry, ...route.exit] : [];
    const lead = t.crossed[0] ?? 0;
    const last = t.crossed[t.crossed.length - 1] ?? 0;
    const past = (n: number) => (n === 0 ? "nothing yet" : path.slice(0, n).join(", "));
    const axles = `${t.axles} axle${t.axles === 1 ? "" : "s"}`;
    const rear = t.axles > 1 ? `; last axle past ${past(last)}` : "";
    return {
      train: t.train,
      route: t.route,
      detector: lead > 0 ? (path[lead - 1] ?? null) : null,
      words: `Train ${t.train} on ${t.route}, ${axles}: leading axle past ${past(lead)}${rear}`,
    };
  });
}
