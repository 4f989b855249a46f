import { useFieldArray, type FieldErrors, type UseFormReturn } from "react-hook-form";
import type { LayoutLine } from "@shared/layout/schema";
import { detectorsOn, signalsOn, type RoleRecords } from "../../lib/junctionRoles";
import { FormField, INPUT } from "../records/FormField";
import { Button } from "../ui/Button";
import { routeFor, type JunctionValues } from "./roleForm";
import { PickRoles, SelectRole } from "./RoleFields";

interface JunctionFormProps {
  form: UseFormReturn<JunctionValues>;
  records: RoleRecords & { lines: LayoutLine[] };
}

/** The message of a nested field's error, by its dotted name. */
export function errorAt(errors: FieldErrors<JunctionValues>, name: string): string | undefined {
  let at: unknown = errors;
  for (const part of name.split(".")) at = (at as Record<string, unknown> | undefined)?.[part];
  const message = (at as { message?: unknown } | undefined)?.message;
  return typeof message === "string" ? message : undefined;
}

/** Maps the layout's detectors and signals to the template's roles. */
export function JunctionForm({ form, records }: JunctionFormProps) {
  const { register, watch, setValue, control, formState } = form;
  const errors = formState.errors;
  const kind = watch("kind");
  const routes = useFieldArray({ control, name: "routes" });
  const roads = useFieldArray({ control, name: "roads" });
  const lineOptions = records.lines.map((l) => ({ value: l.id, label: `${l.id} — ${l.name}` }));
  const converging = kind === "converging-priority" || kind === "converging-first-come";
  const sectionLine = watch("sectionLine");
  const facingLine = watch("line");
  const err = (name: string) => errorAt(errors, name);

  const lineSelect = (label: string, name: Parameters<typeof register>[0], onPicked?: (line: string) => void) => (
    <FormField label={label} error={err(name)}>
      <select className={INPUT} {...register(name, { onChange: (e: { target: { value: string } }) => onPicked?.(e.target.value) })}>
        {lineOptions.map((o) => (
          <option key={o.value} value={o.value}>
            {o.label}
          </option>
        ))}
      </select>
    </FormField>
  );

  if (converging) {
    const routeValues = watch("routes");
    return (
      <div className="space-y-4">
        <div className="grid gap-3 sm:grid-cols-3">
          {lineSelect("The joined section runs along", "sectionLine")}
          {kind === "converging-priority" ? (
            <FormField label="Priority route" error={err("priority")}>
              <select className={INPUT} {...register("priority")}>
                {routeValues.map((r, i) => (
                  <option key={i} value={r.id}>
                    {r.id || `route ${i + 1}`}
                  </option>
                ))}
              </select>
            </FormField>
          ) : null}
        </div>
        {routes.fields.map((field, i) => {
          const line = routeValues[i]?.line ?? "";
          const dets = detectorsOn(records, line);
          return (
            <fieldset key={field.id} className="grid gap-3 rounded-md border border-panel-700 p-3 sm:grid-cols-3" aria-label={`Route ${i + 1}`}>
              <legend className="px-1 text-sm font-bold">Route {i + 1}</legend>
              <FormField label="Route id" error={err(`routes.${i}.id`)}>
                <input className={INPUT} {...register(`routes.${i}.id`)} />
              </FormField>
              {lineSelect("Comes in on line", `routes.${i}.line`, (picked) => {
                const others = routeValues.filter((_, j) => j !== i).flatMap((r) => [r.entry, ...r.approach]);
                const fresh = routeFor(records, picked, sectionLine, routeValues[i]?.id ?? picked, others);
                setValue(`routes.${i}`, { ...fresh, id: routeValues[i]?.id ?? picked });
              })}
              <SelectRole label="Home signal" name={`routes.${i}.signal`} options={signalsOn(records, line)} register={register} error={err(`routes.${i}.signal`)} />
              <PickRoles label="Approach detectors (the first starts the count)" name={`routes.${i}.approach`} options={dets} register={register} error={err(`routes.${i}.approach`)} />
              <SelectRole label="Entry detector (level with the signal)" name={`routes.${i}.entry`} options={dets} register={register} error={err(`routes.${i}.entry`)} />
              <PickRoles label={`Exit detectors beyond the fouling point (on ${sectionLine})`} name={`routes.${i}.exit`} options={detectorsOn(records, sectionLine)} register={register} error={err(`routes.${i}.exit`)} />
              <div className="sm:col-span-3">
                <Button tone="danger" disabled={routes.fields.length <= 2} onClick={() => routes.remove(i)}>
                  Remove route {i + 1}
                </Button>
              </div>
            </fieldset>
          );
        })}
        <Button onClick={() => routes.append(routeFor(records, records.lines[0]?.id ?? "", sectionLine, `route${routes.fields.length + 1}`))}>Add route</Button>
        <SizeFields form={form} />
      </div>
    );
  }

  const roadValues = watch("roads");
  const facingDets = detectorsOn(records, facingLine);
  return (
    <div className="space-y-4">
      <div className="grid gap-3 sm:grid-cols-3">
        {lineSelect("Trains approach on line", "line")}
        <SelectRole label="Home signal (before the points)" name="signal" options={signalsOn(records, facingLine)} register={register} error={err("signal")} />
        <FormField label="Facing points" error={err("points")}>
          <select className={INPUT} {...register("points")}>
            <option value="">(choose)</option>
            {records.points.map((p) => (
              <option key={p.id} value={p.id}>
                {`${p.id} — ${p.name} (${p.line}, ${p.at.toFixed(1)} m)`}
              </option>
            ))}
          </select>
        </FormField>
        <PickRoles label="Approach detectors" name="approach" options={facingDets} register={register} error={err("approach")} />
        <SelectRole label="Entry detector (level with the signal)" name="entry" options={facingDets} register={register} error={err("entry")} />
      </div>
      {roads.fields.map((field, i) => (
        <fieldset key={field.id} className="grid gap-3 rounded-md border border-panel-700 p-3 sm:grid-cols-3" aria-label={`Road ${i + 1}`}>
          <legend className="px-1 text-sm font-bold">{i === 0 ? "Road 1 (points normal)" : "Road 2 (points reverse)"}</legend>
          <FormField label="Road id" error={err(`roads.${i}.id`)}>
            <input className={INPUT} {...register(`roads.${i}.id`)} />
          </FormField>
          {lineSelect("Runs along line", `roads.${i}.line`, () => setValue(`roads.${i}.exit`, []))}
          <PickRoles label="Detectors along the road (first beyond the fouling point, last at its end)" name={`roads.${i}.exit`} options={detectorsOn(records, roadValues[i]?.line ?? "")} register={register} error={err(`roads.${i}.exit`)} />
        </fieldset>
      ))}
      <SizeFields form={form} />
    </div>
  );
}

function SizeFields({ form }: { form: UseFormReturn<JunctionValues> }) {
  const { register, formState } = form;
  return (
    <div className="grid gap-3 sm:grid-cols-3">
      <FormField label="Longest train to prove (axles)" error={errorAt(formState.errors, "maxAxles")} help="from the placement page's longest train, when given">
        <input className={INPUT} type="number" min={1} max={8} {...register("maxAxles", { valueAsNumber: true })} />
      </FormField>
      <FormField label="Trains on one route at once" error={errorAt(formState.errors, "maxTrainsPerRoute")}>
        <input className={INPUT} type="number" min={1} max={4} {...register("maxTrainsPerRoute", { valueAsNumber: true })} />
      </FormField>
    </div>
  );
}
