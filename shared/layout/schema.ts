/**
 * The layout file format `blocklight.layout/1` (CONTRACT.md §3) as zod schemas.
 * Cross-references (a detector on an unknown line, a node serving an unknown signal…)
 * are checked in `shared/rulebook/validate.ts` together with the rulebook.
 */
import { z } from "zod";
import { aspectSchema, idSchema, rulebookSchema } from "../rulebook/schema";
import { nameText as nameTextOf } from "../contract/nameText";

const nameText = nameTextOf();

export const LAYOUT_FORMAT = "blocklight.layout/1";

export const slugSchema = z
  .string()
  .regex(/^[a-z0-9][a-z0-9-]{0,62}$/, "must be lower-case letters, digits and '-', starting with a letter or digit");

/** Every record list is bounded so one upload cannot ask for unbounded work. */
export const MAX_RECORDS_PER_KIND = 500;

/** Metres of model track from the start of the line. */
const metres = z.number().finite().min(0, "must not be negative");

export const lineSchema = z.strictObject({ id: idSchema, name: nameText });
export const detectorSchema = z.strictObject({ id: idSchema, name: nameText, line: idSchema, at: metres });
export const signalSchema = z.strictObject({
  id: idSchema,
  name: nameText,
  line: idSchema,
  at: metres,
  aspects: z.array(aspectSchema).min(1),
});
/** How points are moved: by a board on the rulebook's `throw` ("power") or by a person ("hand"). */
export const POINTS_WORKING = ["power", "hand"] as const;
export const pointsWorkingSchema = z.enum(POINTS_WORKING);
export const pointsSchema = z.strictObject({
  id: idSchema,
  name: nameText,
  line: idSchema,
  at: metres,
  /** Absent in older `/1` files: such points are hand-worked (CONTRACT.md §3); see {@link pointsWorking}. */
  worked: pointsWorkingSchema.optional(),
});
/** A node cannot serve more of a kind than a layout may have (bounded like the lists themselves). */
const servedIds = () => z.array(idSchema).max(MAX_RECORDS_PER_KIND);
export const nodeSchema = z.strictObject({
  id: idSchema,
  name: nameText,
  detectors: servedIds().default([]),
  signals: servedIds().default([]),
  /** Points whose position this board reports or which it drives (absent in older `/1` files = none). */
  points: servedIds().optional(),
});

/** How a points is worked, `hand` when the file does not say (CONTRACT.md §3). */
export function pointsWorking(points: { worked?: PointsWorking }): PointsWorking {
  return points.worked ?? "hand";
}
export type PointsWorking = z.infer<typeof pointsWorkingSchema>;

export const scaleSchema = z.strictObject({
  name: z.string().min(1).max(40),
  /** 1:ratio, e.g. 22.5 for G scale. */
  ratio: z.number().positive().max(1000),
});


/** The layout's records and schematic: everything of a layout file except its rulebook. */
export const layoutRecordsSchema = z.strictObject({
  format: z.literal(LAYOUT_FORMAT),
  slug: slugSchema,
  name: nameText,
  scale: scaleSchema,
  /** A layout just created has no lines yet; a file to import needs at least one. */
  lines: z.array(lineSchema).max(MAX_RECORDS_PER_KIND),
  detectors: z.array(detectorSchema).max(MAX_RECORDS_PER_KIND).default([]),
  signals: z.array(signalSchema).max(MAX_RECORDS_PER_KIND).default([]),
  points: z.array(pointsSchema).max(MAX_RECORDS_PER_KIND).default([]),
  nodes: z.array(nodeSchema).max(MAX_RECORDS_PER_KIND).default([]),
  /** Drawing coordinates for the mimic; free-form so the editor can grow (docs/formats.md). */
  schematic: z.record(z.string(), z.unknown()).optional(),
});

export const layoutFileSchema = layoutRecordsSchema.extend({
  lines: z.array(lineSchema).min(1).max(MAX_RECORDS_PER_KIND),
  rulebook: rulebookSchema,
});

export type LayoutFile = z.infer<typeof layoutFileSchema>;
export type LayoutRecords = z.infer<typeof layoutRecordsSchema>;
export type LayoutRecordsInput = z.input<typeof layoutRecordsSchema>;
export type LayoutScale = z.infer<typeof scaleSchema>;
export type LayoutFileInput = z.input<typeof layoutFileSchema>;
export type LayoutLine = z.infer<typeof lineSchema>;
export type LayoutDetector = z.infer<typeof detectorSchema>;
export type LayoutSignal = z.infer<typeof signalSchema>;
export type LayoutPoints = z.infer<typeof pointsSchema>;
export type LayoutNode = z.infer<typeof nodeSchema>;
