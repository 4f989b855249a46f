/**
 * POST /api/simulate (CONTRACT.md §6): runs a list of inputs through a layout's rulebook
 * with the same pure step function the live pipeline uses, and returns every step.
 */
import { Router } from "express";
import { z } from "zod";
import { idSchema, nameSchema } from "../../../shared/rulebook/schema";
import { validateLayoutFile } from "../../../shared/rulebook/validate";
import { initialState, shownAspects, step, type EngineInput } from "../../../shared/rulebook/engine";
import type { AppDeps } from "../../deps";
import { HttpError, parseWith } from "../../http/errors";
import { requireSignedIn } from "../auth/middleware";

/** Times may be ISO 8601 strings (the contract's form) or milliseconds. */
const timeSchema = z.union([z.number().finite().min(0), z.iso.datetime({ offset: true }).transform((s) => Date.parse(s))]);
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

const MAX_EVENTS = 100_000;
const simulateBodySchema = z.strictObject({
  layout: z.unknown(),
  events: z.array(simulateInputSchema).max(MAX_EVENTS),
});

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

export function simulateRoutes(_deps: AppDeps): Router {
  const router = Router();
  router.post("/simulate", requireSignedIn, (req, res) => {
    const body = parseWith(simulateBodySchema, req.body);
    const checked = validateLayoutFile(body.layout);
    if (!checked.ok) throw new HttpError(400, "invalid_layout", `the layout file has ${checked.errors.length} error(s)`, checked.errors);
    const rulebook = checked.layout.rulebook;
    const firstAt = body.events.length ? toEngineInput(body.events[0]).at : 0;
    let state = initialState(rulebook, firstAt);
    const steps = body.events.map((event) => {
      const input = toEngineInput(event);
      const result = step(rulebook, state, input);
      state = result.state;
      return { input: event, shown: shownAspects(rulebook, state), state, changes: result.changes };
    });
    res.json({ initial: { shown: shownAspects(rulebook, initialState(rulebook, firstAt)) }, steps });
  });
  return router;
}
