/**
 * One POST /api/simulate request, start to finish, as the simulation worker runs it: the raw
 * body in, the status and the JSON text of the reply out. Nothing here touches the server's
 * main thread, so a large or slow simulation cannot hold back the live pipeline.
 *
 * Limits (CONTRACT.md §6 leaves them to us; each refusal says which and where):
 * - input: at most MAX_EVENTS inputs; a rulebook of at most MAX_RULES rules and MAX_DECLARED
 *   latches, counters and selectors (each kind), nesting at most MAX_JSON_DEPTH deep → 413/400;
 * - output: inputs × state size at most MAX_OUTPUT_CELLS (each step carries the whole state) → 413.
 */
import { z } from "zod";
import { idSchema, nameSchema } from "@shared/rulebook/schema";
import { validateLayoutFile } from "@shared/rulebook/validate";
import { initialState, shownAspects, step, type EngineInput } from "@shared/rulebook/engine";
import { bodyRefusal, jsonBodyProblems } from "../../http/bodyGuard";
import { zodDetails } from "../../http/errors";

export const MAX_EVENTS = 100_000;
export const MAX_RULES = 1_000;
export const MAX_DECLARED = 256;
/**
 * Steps × (latches + counters + selectors + signals + 1). A step of the demo junction is about
 * 500 bytes of JSON (8 cells), so this keeps a reply near 20 MB: the main thread only writes it
 * out, but a socket still has to carry it.
 */
export const MAX_OUTPUT_CELLS = 300_000;

/** Times may be ISO 8601 strings (the contract's form) or milliseconds. */
const timeSchema = z.union([z.number().finite().min(0).max(8.64e15), z.iso.datetime({ offset: true }).transform((s) => Date.parse(s))]);
const common = { at: timeSchema, reason: z.string().max(500).optional() };
const simulateInputSchema = z.discriminatedUnion("type", [
  z.strictObject({ type: z.literal("pulse"), detector: idSchema, at: timeSchema }),
  z.strictObject({ type: z.literal("tick"), at: timeSchema }),
  z.strictObject({ type: z.literal("hold"), signal: idSchema, ...common }),
  z.strictObject({ type: z.literal("release"), signal: idSchema, ...common }),
  z.strictObject({ type: z.literal("set"), latch: nameSchema, ...common }),
  z.strictObject({ type: z.literal("clear"), latch: nameSchema, ...common }),
  z.strictObject({ type: z.literal("zero"), counter: nameSchema, ...common }),
  z.strictObject({ type: z.literal("restart"), ...common }),
]);
type SimulateInput = z.infer<typeof simulateInputSchema>;

/** The outer shape, checked first and cheaply: sizes before any input is looked at. */
const envelopeSchema = z.strictObject({
  layout: z.unknown(),
  events: z.array(z.unknown()).max(MAX_EVENTS, `at most ${MAX_EVENTS} inputs in one simulation`),
});
const eventsSchema = z.array(simulateInputSchema);

/** Maps the REST form of an input (commands flattened) onto the engine's input. */
export function toEngineInput(input: SimulateInput): EngineInput {
  switch (input.type) {
    case "pulse":
      return { type: "pulse", detector: input.detector, at: input.at };
    case "tick":
      return { type: "tick", at: input.at };
    case "hold":
    case "release":
      return { type: "command", command: input.type, signal: input.signal, at: input.at, reason: input.reason };
    case "set":
    case "clear":
      return { type: "command", command: input.type, latch: input.latch, at: input.at, reason: input.reason };
    case "zero":
      return { type: "command", command: "zero", counter: input.counter, at: input.at, reason: input.reason };
    case "restart":
      return { type: "command", command: "restart", at: input.at, reason: input.reason };
  }
}

export interface SimulationReply {
  status: number;
  /** The reply body as JSON text. */
  json: string;
}

const error = (status: number, code: string, message: string, details?: { path: string; message: string }[]): SimulationReply => ({
  status,
  json: JSON.stringify({ error: { code, message, ...(details ? { details } : {}) } }),
});

const sizeOf = (value: unknown) => (value && typeof value === "object" ? Object.keys(value).length : 0);

/** Counts of what the raw layout declares, before validation spends time on it. */
function declaredTooMuch(layout: unknown): { path: string; message: string }[] {
  const rulebook = (layout as { rulebook?: Record<string, unknown> } | null)?.rulebook;
  if (!rulebook || typeof rulebook !== "object") return [];
  const problems: { path: string; message: string }[] = [];
  if (Array.isArray(rulebook.rules) && rulebook.rules.length > MAX_RULES) problems.push({ path: "$.layout.rulebook.rules", message: `at most ${MAX_RULES} rules` });
  for (const kind of ["latches", "counters", "selectors"] as const) {
    if (sizeOf(rulebook[kind]) > MAX_DECLARED) problems.push({ path: `$.layout.rulebook.${kind}`, message: `at most ${MAX_DECLARED} ${kind}` });
  }
  return problems;
}

export function runSimulation(body: Uint8Array): SimulationReply {
  let raw: unknown;
  try {
    raw = JSON.parse(new TextDecoder("utf-8", { fatal: true }).decode(body));
  } catch {
    return error(400, "invalid_json", "the request body is not UTF-8 JSON");
  }
  // The body skips the app's JSON guard (it is parsed here, off the main thread): the same checks.
  const hostile = jsonBodyProblems(raw);
  if (hostile.length > 0) {
    const refusal = bodyRefusal(hostile);
    return error(refusal.status, refusal.code, refusal.message, hostile);
  }
  const envelope = envelopeSchema.safeParse(raw);
  if (!envelope.success) {
    const details = zodDetails(envelope.error);
    const tooMany = envelope.error.issues.some((i) => i.code === "too_big");
    return error(tooMany ? 413 : 400, tooMany ? "simulation_too_large" : "invalid_input", tooMany ? "the simulation is too large" : "the request body is not valid", details);
  }
  const declared = declaredTooMuch(envelope.data.layout);
  if (declared.length) return error(413, "simulation_too_large", "the simulation is too large", declared);
  const events = eventsSchema.safeParse(envelope.data.events);
  if (!events.success) return error(400, "invalid_input", "the request body is not valid", zodDetails(events.error).map((d) => ({ ...d, path: d.path.replace(/^\$/, "$.events") })));
  const checked = validateLayoutFile(envelope.data.layout);
  if (!checked.ok) return error(400, "invalid_layout", `the layout file has ${checked.errors.length} error(s)`, checked.errors);

  const rulebook = checked.layout.rulebook;
  const cellsPerStep = 1 + Object.keys(rulebook.latches).length + Object.keys(rulebook.counters).length + Object.keys(rulebook.selectors).length + checked.layout.signals.length;
  const cells = events.data.length * cellsPerStep;
  if (cells > MAX_OUTPUT_CELLS) {
    return error(413, "simulation_too_large", `the reply would hold ${cells} state values (${events.data.length} steps × ${cellsPerStep}); at most ${MAX_OUTPUT_CELLS}`, [
      { path: "$.events", message: `at most ${Math.floor(MAX_OUTPUT_CELLS / cellsPerStep)} inputs for this rulebook` },
    ]);
  }

  const firstAt = events.data.length ? toEngineInput(events.data[0]).at : 0;
  let state = initialState(rulebook, firstAt);
  const steps = events.data.map((event) => {
    const result = step(rulebook, state, toEngineInput(event));
    state = result.state;
    return { input: event, shown: shownAspects(rulebook, state), state, changes: result.changes };
  });
  return { status: 200, json: JSON.stringify({ initial: { shown: shownAspects(rulebook, initialState(rulebook, firstAt)) }, steps }) };
}
