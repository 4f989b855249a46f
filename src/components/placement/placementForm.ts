import { z } from "zod";

/** The placement assumptions; every society should measure its own. */
export const placementFormSchema = z
  .object({
    speedMode: z.enum(["kmh", "mph", "timed"]),
    prototypeKmh: z.number().min(0).max(400),
    prototypeMph: z.number().min(0).max(250),
    timedDistanceM: z.number().positive("a measured length over 0 m").max(1000),
    timedSeconds: z.number().positive("a time over 0 s").max(3600),
    reactionS: z.number().min(0).max(30),
    controllerLatencyMs: z.number().min(0).max(10_000),
    decelerationMps2: z.number().positive("must be more than 0").max(20),
    marginM: z.number().min(0).max(100),
    longestTrainM: z.number().min(0).max(100),
    longestTrainAxles: z.number().int().min(1).max(64),
    rearOverhangM: z.number().min(0).max(5),
  })
  .refine((v) => !Number.isNaN(v.prototypeKmh), { path: ["prototypeKmh"], message: "a speed" });
export type PlacementFormValues = z.infer<typeof placementFormSchema>;

export const PLACEMENT_DEFAULTS: PlacementFormValues = {
  speedMode: "kmh",
  prototypeKmh: 30,
  prototypeMph: 20,
  timedDistanceM: 3,
  timedSeconds: 6,
  reactionS: 1,
  controllerLatencyMs: 150,
  decelerationMps2: 0.15,
  marginM: 0.5,
  longestTrainM: 3,
  longestTrainAxles: 8,
  rearOverhangM: 0.1,
};
