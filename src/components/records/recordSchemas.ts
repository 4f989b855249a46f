/**
 * The inline forms' schemas: the shared layout schemas (the server checks the same), with
 * what a form needs on top: checkbox groups read as lists, `danger` in every aspect list
 * (CONTRACT.md §3), and how points are worked.
 */
import { z } from "zod";
import { detectorSchema, lineSchema, nodeSchema, pointsSchema, signalSchema } from "@shared/layout/schema";
import { idSchema } from "@shared/rulebook/schema";

/** A checkbox group gives a list, one string, or false (nothing ticked): always a list here. */
const ticked = <S extends z.ZodType>(schema: S) => z.preprocess((v) => (Array.isArray(v) ? v : typeof v === "string" ? [v] : []), schema);

export const lineFormSchema = lineSchema;
export const detectorFormSchema = detectorSchema;
export const signalFormSchema = signalSchema.extend({
  aspects: ticked(signalSchema.shape.aspects.refine((a) => a.includes("danger"), "every signal can show danger")),
});
export const WORKED = ["hand", "power"] as const;
export const pointsFormSchema = pointsSchema.extend({ worked: z.enum(WORKED) });
export const nodeFormSchema = nodeSchema.extend({
  detectors: ticked(z.array(idSchema)),
  signals: ticked(z.array(idSchema)),
  points: ticked(z.array(idSchema)),
});
