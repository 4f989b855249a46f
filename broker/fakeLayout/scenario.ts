/**
 * Fake-layout scenarios (`blocklight.scenario/1`, our own JSON format): which trains run,
 * on which route of a layout's rulebook, how long they are and how fast they go.
 *
 * ```json
 * { "format": "blocklight.scenario/1", "layout": "kestrel-bank", "name": "A day on the bank",
 *   "trains": [ { "name": "Up goods", "route": "main", "axles": 4, "axleSpacingM": 0.3,
 *                 "speedMps": 0.6, "startS": 0, "repeat": { "everyS": 240, "count": 3 } } ] }
 * ```
 * `route` names one of the rulebook's `proving.routes`; a list of routes (which must share
 * their signal, approach and entry) means "whichever road is free when the signal clears for
 * this train", for facing junctions whose rulebook chooses the road.
 */
import fs from "node:fs";
import { z } from "zod";
import type { LayoutFile } from "@shared/layout/schema";

export const SCENARIO_FORMAT = "blocklight.scenario/1";

const id = z.string().regex(/^[A-Za-z0-9_-]{1,32}$/, "an id of 1–32 letters, digits, _ or -");

export const scenarioTrainSchema = z.strictObject({
  name: z.string().trim().min(1).max(80).optional(),
  route: z.union([id, z.array(id).min(1).max(8)]),
  axles: z.number().int().min(1, "a train has at least 1 axle").max(200),
  axleSpacingM: z.number().positive("axle spacing must be more than 0 m").max(5),
  speedMps: z.number().positive("speed must be more than 0 m/s").max(10, "faster than 10 m/s is not a model train"),
  startS: z.number().min(0).max(86_400),
  repeat: z.strictObject({ everyS: z.number().positive().max(86_400), count: z.number().int().min(1).max(10_000) }).optional(),
});

export const scenarioSchema = z.strictObject({
  format: z.literal(SCENARIO_FORMAT, { error: `format must be "${SCENARIO_FORMAT}"` }),
  layout: id.optional(),
  name: z.string().trim().min(1).max(120),
  note: z.string().max(2000).optional(),
  /** With --loop: seconds of quiet after the last train has left before the day starts again. */
  loopPauseS: z.number().min(0).max(86_400).optional(),
  trains: z.array(scenarioTrainSchema).min(1, "a scenario needs at least one train"),
});

export type Scenario = z.infer<typeof scenarioSchema>;
export type ScenarioTrain = z.infer<typeof scenarioTrainSchema>;

export interface ScenarioError {
  /** JSON path, e.g. `$.trains[2].route`. */
  path: string;
  message: string;
}

export class ScenarioInvalidError extends Error {
  constructor(
    readonly source: string,
    readonly errors: ScenarioError[],
  ) {
    super(`${source}: ${errors.length} problem(s)\n${errors.map((e) => `  ${e.path}: ${e.message}`).join("\n")}`);
  }
}

function jsonPath(segments: readonly PropertyKey[]): string {
  return segments.reduce<string>((acc, seg) => (typeof seg === "number" ? `${acc}[${seg}]` : `${acc}.${String(seg)}`), "$");
}

/** Checks the shape of a scenario (no layout needed). */
export function parseScenario(input: unknown, source = "scenario"): Scenario {
  const result = scenarioSchema.safeParse(input);
  if (!result.success) {
    throw new ScenarioInvalidError(
      source,
      result.error.issues.map((issue) => ({ path: jsonPath(issue.path), message: issue.message })),
    );
  }
  return result.data;
}

export function loadScenarioFile(file: string): Scenario {
  let text: string;
  try {
    text = fs.readFileSync(file, "utf8");
  } catch (err) {
    throw new ScenarioInvalidError(file, [{ path: "$", message: `cannot read the file (${(err as NodeJS.ErrnoException).code ?? String(err)})` }]);
  }
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (err) {
    throw new ScenarioInvalidError(file, [{ path: "$", message: `not valid JSON: ${(err as Error).message}` }]);
  }
  return parseScenario(json, file);
}

/**
 * Checks a scenario against the layout it is played on: the layout's slug, that no train is
 * longer than the rulebook is proved for (`proving.maxAxles`), that every route exists, that
 * alternative routes share signal, approach and entry, and that every detector
 * on a route is served by some node (otherwise no board could report its pulses).
 */
export function checkScenarioAgainstLayout(scenario: Scenario, layout: LayoutFile, source = "scenario"): void {
  const errors: ScenarioError[] = [];
  if (scenario.layout && scenario.layout !== layout.slug) {
    errors.push({ path: "$.layout", message: `the scenario is for "${scenario.layout}", not "${layout.slug}"` });
  }
  const routes = new Map((layout.rulebook.proving?.routes ?? []).map((r) => [r.id, r]));
  const maxAxles = layout.rulebook.proving?.maxAxles;
  const served = new Set(layout.nodes.flatMap((n) => n.detectors));
  const known = [...routes.keys()].join(", ");
  scenario.trains.forEach((train, i) => {
    if (maxAxles !== undefined && train.axles > maxAxles) {
      errors.push({ path: `$.trains[${i}].axles`, message: `${train.axles} axles is longer than ${layout.slug}'s rulebook is proved for (at most ${maxAxles}: its proving maxAxles)` });
    }
    const ids = typeof train.route === "string" ? [train.route] : train.route;
    ids.forEach((routeId, j) => {
      const at = typeof train.route === "string" ? `$.trains[${i}].route` : `$.trains[${i}].route[${j}]`;
      const route = routes.get(routeId);
      if (!route) {
        errors.push({ path: at, message: `no route "${routeId}" in ${layout.slug}'s rulebook (routes: ${known})` });
        return;
      }
      for (const detector of [...route.approach, route.entry, ...route.exit]) {
        if (!served.has(detector)) errors.push({ path: at, message: `detector "${detector}" of route "${routeId}" is served by no node` });
      }
      const first = routes.get(ids[0]);
      if (j > 0 && first) {
        const same = first.signal === route.signal && first.entry === route.entry && first.approach.join() === route.approach.join();
        if (!same) errors.push({ path: at, message: `alternative routes must share signal, approach and entry ("${ids[0]}" and "${routeId}" do not)` });
      }
    });
  });
  if (errors.length) throw new ScenarioInvalidError(source, errors);
}
