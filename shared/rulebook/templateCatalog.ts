/**
 * The junction templates as a catalogue: each with its options as a zod schema (so a form
 * and the server check the same things, every mistake with its path), one example, and the
 * generator from `templates.ts`. `GET /api/templates` turns the schemas into JSON Schema.
 *
 * @example
 * const result = generateFromTemplate("converging-junction", options, "$.options");
 * if (!result.ok) showErrors(result.errors); // [{ path: "$.options.routes[1].signal", message }]
 */
import { z } from "zod";
import { canonicalRulebook } from "./canonical";
import { idSchema, nameSchema, type Rulebook } from "./schema";
import { convergingJunction, facingJunction } from "./templates";
import { toJsonPath, type ValidationError } from "./validate";

/** Bounds that keep a generated rulebook (and its proof) a sensible size. */
const MAX_ROUTES = 8;
const MAX_DETECTORS_PER_LIST = 8;
const NONE = "none";

const detectorList = (what: string) => z.array(idSchema).min(1, `needs at least one ${what} detector`).max(MAX_DETECTORS_PER_LIST);
const routeId = nameSchema.refine((id) => id !== NONE, { message: `"${NONE}" is reserved (it means no route is set)` });
const provingSize = {
  /** Longest train to prove, in axles (1–8). */
  maxAxles: z.number().int().min(1).max(8).optional(),
  /** Trains on one route at once in the proof (1–4). */
  maxTrainsPerRoute: z.number().int().min(1).max(4).optional(),
};

function distinct(ids: string[], ctx: z.RefinementCtx, path: (index: number) => PropertyKey[], what: string): void {
  const seen = new Set<string>();
  ids.forEach((id, index) => {
    if (seen.has(id)) ctx.addIssue({ code: "custom", path: path(index), message: `${what} "${id}" is used twice` });
    seen.add(id);
  });
}

export const convergingOptionsSchema = z
  .strictObject({
    routes: z
      .array(
        z.strictObject({
          id: routeId,
          signal: idSchema,
          approach: detectorList("approach"),
          entry: idSchema,
          exit: detectorList("exit"),
        }),
      )
      .min(2, "a converging junction needs at least two routes")
      .max(MAX_ROUTES),
    order: z.enum(["priority", "first-come"]),
    /** With `order: "priority"`: the route that goes first (default the first route). */
    priority: nameSchema.optional(),
    ...provingSize,
  })
  .superRefine((options, ctx) => {
    const { routes } = options;
    distinct(routes.map((r) => r.id), ctx, (i) => ["routes", i, "id"], "route id");
    distinct(routes.map((r) => r.signal), ctx, (i) => ["routes", i, "signal"], "signal");
    const own = new Map<string, string>();
    routes.forEach((route, i) => {
      for (const [field, detector] of [["approach", route.approach[0]], ["entry", route.entry]] as const) {
        const path = field === "approach" ? ["routes", i, "approach", 0] : ["routes", i, "entry"];
        if (own.has(detector)) ctx.addIssue({ code: "custom", path, message: `detector "${detector}" is already the ${own.get(detector)}: approach and entry detectors cannot be shared` });
        else own.set(detector, `${field} of route "${route.id}"`);
      }
    });
    const inner = new Set(routes.flatMap((r) => r.exit.slice(0, -1)));
    routes.forEach((route, i) => {
      const last = route.exit[route.exit.length - 1];
      if (own.has(last) || inner.has(last)) {
        ctx.addIssue({
          code: "custom",
          path: ["routes", i, "exit", route.exit.length - 1],
          message: `the last exit detector "${last}" is also another route's approach, entry or inner exit`,
        });
      }
    });
    if (options.priority !== undefined) {
      if (options.order !== "priority") ctx.addIssue({ code: "custom", path: ["priority"], message: 'a priority route only applies with order "priority"' });
      else if (!routes.some((r) => r.id === options.priority)) ctx.addIssue({ code: "custom", path: ["priority"], message: `unknown route "${options.priority}"` });
    }
  });
export type ConvergingOptions = z.infer<typeof convergingOptionsSchema>;

export const facingOptionsSchema = z
  .strictObject({
    signal: idSchema,
    approach: detectorList("approach"),
    entry: idSchema,
    points: idSchema,
    roads: z
      .array(z.strictObject({ id: routeId, exit: detectorList("road") }))
      .length(2, "a facing junction has exactly two roads: the points' normal road first, then the reverse one"),
    /** "power": the rulebook picks the first free road and throws the points; "hand": a person sets them and the signal follows. */
    worked: z.enum(["power", "hand"]),
    ...provingSize,
  })
  .superRefine((options, ctx) => {
    distinct(options.roads.map((r) => r.id), ctx, (i) => ["roads", i, "id"], "road id");
    const onRoads = new Set<string>();
    options.roads.forEach((road, i) =>
      road.exit.forEach((detector, j) => {
        if (onRoads.has(detector)) ctx.addIssue({ code: "custom", path: ["roads", i, "exit", j], message: `detector "${detector}" is on two roads` });
        onRoads.add(detector);
      }),
    );
    if (onRoads.has(options.entry)) ctx.addIssue({ code: "custom", path: ["entry"], message: "the entry detector must not be on a road" });
    if (onRoads.has(options.approach[0])) ctx.addIssue({ code: "custom", path: ["approach", 0], message: "the approach detector must not be on a road" });
  });
export type FacingOptions = z.infer<typeof facingOptionsSchema>;

export interface JunctionTemplate {
  id: string;
  name: string;
  description: string;
  options: z.ZodType;
  example: Record<string, unknown>;
  generate(options: never): Rulebook;
}

function template<S extends z.ZodType<Record<string, unknown>>>(t: {
  id: string;
  name: string;
  description: string;
  options: S;
  example: z.input<S>;
  generate(options: z.output<S>): Rulebook;
}): JunctionTemplate {
  return t as unknown as JunctionTemplate;
}

/** Every template, in the order a wizard offers them. */
export const JUNCTION_TEMPLATES: readonly JunctionTemplate[] = [
  template({
    id: "converging-junction",
    name: "Converging junction",
    description:
      "Two or more routes join into one section, counted by axles from each route's entry detector (level with its signal) to its last exit detector beyond the fouling point. One route at a time is given the junction, either in a priority order or first come, first served.",
    options: convergingOptionsSchema,
    example: {
      routes: [
        { id: "main", signal: "M1", approach: ["MA"], entry: "ME", exit: ["JX"] },
        { id: "branch", signal: "B1", approach: ["BA"], entry: "BE", exit: ["JX"] },
      ],
      order: "priority",
      priority: "main",
      maxAxles: 2,
      maxTrainsPerRoute: 2,
    },
    generate: (options) => convergingJunction(options),
  }),
  template({
    id: "facing-junction",
    name: "Facing junction",
    description:
      "One signal before facing points that lead to two or more roads, such as a passing loop. Each road is counted from the entry detector to its last exit; the signal clears only for a free road, chosen by the rulebook, which throws power-worked points to the first free road, or by where hand-worked points lie.",
    options: facingOptionsSchema,
    example: {
      signal: "W1",
      approach: ["WA"],
      entry: "WE",
      points: "P2",
      roads: [
        { id: "through", exit: ["TX", "TZ"] },
        { id: "loop", exit: ["LX", "LZ"] },
      ],
      worked: "power",
      maxAxles: 2,
      maxTrainsPerRoute: 2,
    },
    generate: (options) => facingJunction(options),
  }),
];

export function findTemplate(id: string): JunctionTemplate | undefined {
  return JUNCTION_TEMPLATES.find((t) => t.id === id);
}

/** A template's options as JSON Schema (the input side: optional fields stay optional). */
export function templateOptionsJsonSchema(t: JunctionTemplate): Record<string, unknown> {
  return z.toJSONSchema(t.options, { io: "input", unrepresentable: "any" }) as Record<string, unknown>;
}

export type GenerateResult = { ok: true; rulebook: Rulebook } | { ok: false; errors: ValidationError[] };

/**
 * Checks the options and generates the rulebook in canonical key order. Error paths start at
 * `base` (e.g. `$.options` when the options sit in a request body).
 */
export function generateFromTemplate(t: JunctionTemplate, options: unknown, base = "$"): GenerateResult {
  const parsed = t.options.safeParse(options);
  if (!parsed.success) {
    return { ok: false, errors: parsed.error.issues.map((issue) => ({ path: toJsonPath(issue.path, base), message: issue.message })) };
  }
  try {
    return { ok: true, rulebook: canonicalRulebook(t.generate(parsed.data as never)) };
  } catch (err) {
    // The schema mirrors the generator's own checks; this is the backstop if they drift apart.
    return { ok: false, errors: [{ path: base, message: (err as Error).message }] };
  }
}
