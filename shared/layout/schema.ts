/**
 * The layout file format `blocklight.layout/1` (CONTRACT.md §3) as zod schemas.
 * Cross-references (a detector on an unknown line, a node serving an unknown signal…)
 * are checked in `shared/rulebook/validate.ts` together with the rulebook.
 */
import { z } from "zod";
import { aspectSchema, idSchema, rulebookSchema } from "../rulebook/schema";

export const LAYOUT_FORMAT = "blocklight.layout/1";

export const slugSchema = z
  .string()
  .regex(/^[a-z0-9][a-z0-9-]{0,62}$/, "must be lower-case letters, digits and '-', starting with a letter or digit");

const nameText = z.string().min(1, "must not be empty").max(120);
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
export const pointsSchema = z.strictObject({ id: idSchema, name: nameText, line: idSchema, at: metres });
export const nodeSchema = z.strictObject({
  id: idSchema,
  name: nameText,
  detectors: z.array(idSchema).default([]),
  signals: z.array(idSchema).default([]),
});

export const layoutFileSchema = z.strictObject({
  format: z.literal(LAYOUT_FORMAT),
  slug: slugSchema,
  name: nameText,
  scale: z.strictObject({ name: z.string().min(1).max(40), ratio: z.number().positive() }),
  lines: z.array(lineSchema).min(1),
  detectors: z.array(detectorSchema).default([]),
  signals: z.array(signalSchema).default([]),
  points: z.array(pointsSchema).default([]),
  nodes: z.array(nodeSchema).default([]),
  /** Drawing coordinates for the mimic; free-form so the editor can grow. */
  schematic: z.record(z.string(), z.unknown()).optional(),
  rulebook: rulebookSchema,
});

export type LayoutFile = z.infer<typeof layoutFileSchema>;
export type LayoutFileInput = z.input<typeof layoutFileSchema>;
export type LayoutLine = z.infer<typeof lineSchema>;
export type LayoutDetector = z.infer<typeof detectorSchema>;
export type LayoutSignal = z.infer<typeof signalSchema>;
export type LayoutPoints = z.infer<typeof pointsSchema>;
export type LayoutNode = z.infer<typeof nodeSchema>;
