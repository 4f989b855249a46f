/**
 * The rulebook file formats `blocklight.rulebook/1` and `/2` (CONTRACT.md §4) as zod schemas.
 * `/2` is `/1` plus the `moved` trigger, the `points` condition, the `throw` action and the
 * points a proving route needs; every `/1` file is a valid `/2` file and runs the same.
 *
 * This is the single source of truth for the shape of a rulebook: the server's import,
 * the client's editor and the engine all read these types. Shape checks live here;
 * cross-reference checks (undeclared names, aspects a signal cannot show, duplicate ids)
 * live in `validate.ts`, because they need the whole file at once.
 */
import { z } from "zod";

/** Ids of detectors, signals, nodes, lines and points: CONTRACT.md §2. */
export const ID_PATTERN = /^[A-Za-z0-9_-]{1,32}$/;
export const idSchema = z.string().regex(ID_PATTERN, "must be 1–32 letters, digits, '_' or '-'");

/** Names of latches, counters and selectors, and rule ids (free identifiers, kept short). */
export const nameSchema = z.string().min(1, "must not be empty").max(64, "must be at most 64 characters");

export const ASPECTS = ["danger", "caution", "clear"] as const;
export const aspectSchema = z.enum(ASPECTS);
export type Aspect = z.infer<typeof aspectSchema>;
/** What a board or a mimic shows for a signal whose state is not known. */
export type ShownAspect = Aspect | "dark";

export const COMPARISONS = ["==", "!=", ">", ">=", "<", "<="] as const;
export type Comparison = (typeof COMPARISONS)[number];

/** Where points lie as a board reports it; `unknown` until the first report. */
export const POINTS_LIES = ["normal", "reverse", "moving"] as const;
export type PointsLie = (typeof POINTS_LIES)[number];
export const POINTS_CONDITION_LIES = [...POINTS_LIES, "unknown"] as const;
export type PointsConditionLie = (typeof POINTS_CONDITION_LIES)[number];
/** Where points can be thrown to (and lie when still). */
export const POINTS_POSITIONS = ["normal", "reverse"] as const;
export type PointsPosition = (typeof POINTS_POSITIONS)[number];

export type Condition =
  | { latch: string }
  | { count: string; op: Comparison; value: number }
  | { selector: string; is: string }
  | { aspect: string; is: Aspect }
  | { points: string; lies: PointsConditionLie }
  | { not: Condition }
  | { all: Condition[] }
  | { any: Condition[] };

export const conditionSchema: z.ZodType<Condition> = z.lazy(() =>
  z.union([
    z.strictObject({ latch: nameSchema }),
    z.strictObject({ count: nameSchema, op: z.enum(COMPARISONS), value: z.number().int() }),
    z.strictObject({ selector: nameSchema, is: nameSchema }),
    z.strictObject({ aspect: idSchema, is: aspectSchema }),
    z.strictObject({ points: idSchema, lies: z.enum(POINTS_CONDITION_LIES) }),
    z.strictObject({ not: conditionSchema }),
    z.strictObject({ all: z.array(conditionSchema) }),
    z.strictObject({ any: z.array(conditionSchema) }),
  ]),
);

export const actionSchema = z.union([
  z.strictObject({ set: nameSchema }),
  z.strictObject({ clear: nameSchema }),
  z.strictObject({ add: nameSchema, by: z.number().int() }),
  z.strictObject({ zero: nameSchema }),
  z.strictObject({ select: nameSchema, value: nameSchema }),
  z.strictObject({ show: idSchema, aspect: aspectSchema }),
  z.strictObject({ throw: idSchema, to: z.enum(POINTS_POSITIONS) }),
  z.strictObject({ alarm: z.string().min(1).max(200) }),
]);
export type Action = z.infer<typeof actionSchema>;

export const triggerSchema = z.union([
  z.literal("standing"),
  z.strictObject({ pass: idSchema }),
  z.strictObject({ moved: idSchema }),
  z.strictObject({ quiet: idSchema, ms: z.number().int().positive() }),
]);
export type Trigger = z.infer<typeof triggerSchema>;

export const ruleSchema = z.strictObject({
  id: nameSchema,
  /** Optional plain-words note shown beside the rule in the readable view. */
  note: z.string().max(500).optional(),
  on: triggerSchema,
  if: conditionSchema.optional(),
  do: z.array(actionSchema),
});
export type Rule = z.infer<typeof ruleSchema>;

export const provingRouteSchema = z.strictObject({
  id: nameSchema,
  signal: idSchema,
  approach: z.array(idSchema).min(1, "a route needs at least one approach detector"),
  entry: idSchema,
  exit: z.array(idSchema).min(1, "a route needs at least one exit detector"),
  /** `/2`: where points must lie for this route (a facing junction), e.g. `{ "P1": "reverse" }`. */
  points: z.record(idSchema, z.enum(POINTS_POSITIONS)).optional(),
});
export type ProvingRoute = z.infer<typeof provingRouteSchema>;

export const provingSchema = z.strictObject({
  routes: z.array(provingRouteSchema).min(1),
  conflicts: z.array(z.tuple([nameSchema, nameSchema])).default([]),
  priority: nameSchema.optional(),
  maxAxles: z.number().int().min(1).max(8).default(2),
  maxTrainsPerRoute: z.number().int().min(1).max(4).default(2),
});
export type Proving = z.infer<typeof provingSchema>;

export const RULEBOOK_FORMAT_1 = "blocklight.rulebook/1";
export const RULEBOOK_FORMAT_2 = "blocklight.rulebook/2";
/** The format a rulebook without points names (files name the lowest format they need). */
export const RULEBOOK_FORMAT = RULEBOOK_FORMAT_1;
export const RULEBOOK_FORMATS = [RULEBOOK_FORMAT_1, RULEBOOK_FORMAT_2] as const;
export type RulebookFormat = (typeof RULEBOOK_FORMATS)[number];

export const rulebookSchema = z.strictObject({
  format: z.enum(RULEBOOK_FORMATS),
  latches: z.record(nameSchema, z.boolean()).default({}),
  counters: z.record(nameSchema, z.number().int().min(0)).default({}),
  selectors: z
    .record(nameSchema, z.strictObject({ values: z.array(nameSchema).min(1), initial: nameSchema }))
    .default({}),
  initial: z.record(idSchema, aspectSchema).default({}),
  rules: z.array(ruleSchema),
  proving: provingSchema.optional(),
});
/** A rulebook after parsing: defaults filled in. */
export type Rulebook = z.infer<typeof rulebookSchema>;
/** A rulebook as written in a file (defaults may be missing). */
export type RulebookInput = z.input<typeof rulebookSchema>;
