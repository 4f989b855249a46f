import type { UseFormReturn } from "react-hook-form";
import { scaleSpeedFromTiming } from "@shared/layout/placement";
import { FormField, INPUT } from "../records/FormField";
import type { PlacementFormValues } from "./placementForm";

type Name = keyof PlacementFormValues;
const FIELDS: { name: Name; label: string; step: string; help?: string }[] = [
  { name: "reactionS", label: "Driver reaction (s)", step: "0.1", help: "from the aspect changing to starting to brake" },
  { name: "controllerLatencyMs", label: "Controller latency (ms)", step: "10", help: "pulse → server → lamp; see npm run bench" },
  { name: "decelerationMps2", label: "Braking (model m/s²)", step: "0.01", help: "measured: speed² ÷ (2 × stopping distance)" },
  { name: "marginM", label: "Margin (m)", step: "0.1", help: "kept in hand for a drifting train" },
  { name: "longestTrainM", label: "Longest train (m)", step: "0.1", help: "the longest the society runs here" },
  { name: "longestTrainAxles", label: "Its axles", step: "1", help: "the proving forms' train length" },
  { name: "rearOverhangM", label: "Rear overhang (m)", step: "0.01", help: "last vehicle beyond its last axle" },
];

/** The speed (scale km/h, scale mph, or a timed run) and the other assumptions, errors beside each. */
export function AssumptionsForm({ form, ratio }: { form: UseFormReturn<PlacementFormValues>; ratio: number }) {
  const { register, watch, formState } = form;
  const mode = watch("speedMode");
  const err = (n: Name) => formState.errors[n]?.message;
  const num = (n: Name, label: string, step: string, help?: string) => (
    <FormField key={n} label={label} error={err(n)} help={help}>
      <input className={INPUT} type="number" step={step} min="0" {...register(n, { valueAsNumber: true })} />
    </FormField>
  );
  let timed: string | null = null;
  if (mode === "timed") {
    try {
      const t = scaleSpeedFromTiming(Number(watch("timedDistanceM")), Number(watch("timedSeconds")), ratio);
      timed = `${t.modelMps.toFixed(2)} m/s on the model = ${t.prototypeKmh.toFixed(1)} km/h (${t.prototypeMph.toFixed(1)} mph) at scale`;
    } catch {
      timed = null;
    }
  }
  return (
    <form className="grid gap-3 sm:grid-cols-2" onSubmit={(e) => e.preventDefault()} aria-label="Placement assumptions">
      <fieldset className="space-y-2 sm:col-span-2">
        <legend className="text-sm font-semibold">Speed of the fastest train approaching</legend>
        <div className="flex flex-wrap gap-4 text-sm">
          {(
            [
              ["kmh", "scale km/h"],
              ["mph", "scale mph"],
              ["timed", "a timed run"],
            ] as const
          ).map(([value, label]) => (
            <label key={value} className="flex items-center gap-1">
              <input type="radio" value={value} {...register("speedMode")} />
              {label}
            </label>
          ))}
        </div>
        <div className="grid gap-3 sm:grid-cols-2">
          {mode === "kmh" ? num("prototypeKmh", "Speed (scale km/h)", "1") : null}
          {mode === "mph" ? num("prototypeMph", "Speed (scale mph)", "1") : null}
          {mode === "timed" ? (
            <>
              {num("timedDistanceM", "Measured length (m)", "0.1")}
              {num("timedSeconds", "Time over it (s)", "0.1")}
              {timed ? <p className="text-xs text-ink-soft sm:col-span-2">{timed}</p> : null}
            </>
          ) : null}
        </div>
      </fieldset>
      {FIELDS.map((f) => num(f.name, f.label, f.step, f.help))}
    </form>
  );
}
