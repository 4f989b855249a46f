import type { Proving, ProvingRoute, Rulebook } from "@shared/rulebook/schema";
import type { RulebookContext, ValidationError } from "@shared/rulebook/validate";
import { replaceItem, removeItem, uniqueName } from "../../../lib/ruleEdit";
import { Button } from "../../ui/Button";
import { CommitTextField, FieldErrors, NumberField, SelectField, errorsUnder, namesWith } from "./fields";

interface ProvingEditorProps {
  rulebook: Rulebook;
  context: RulebookContext;
  errors: readonly ValidationError[];
  /** Train length for a new proving section: the placement page's longest train, in axles. */
  defaultAxles: number;
  onChange: (next: Rulebook) => void;
}

const BASE = "$.proving";

function DetectorChecks({ label, value, options, onChange, invalid }: { label: string; value: string[]; options: readonly string[]; onChange: (next: string[]) => void; invalid: boolean }) {
  // Ticked detectors keep the order they were ticked in (the order a train meets them).
  const all = [...value.filter((v) => !options.includes(v)), ...options];
  return (
    <fieldset className="text-xs" aria-invalid={invalid || undefined}>
      <legend className="font-semibold text-ink-soft">{label}</legend>
      <div className="mt-1 flex flex-wrap gap-x-3">
        {all.map((d) => (
          <label key={d} className="flex items-center gap-1 text-sm">
            <input type="checkbox" checked={value.includes(d)} onChange={(e) => onChange(e.target.checked ? [...value, d] : value.filter((x) => x !== d))} />
            {d}
            {value.includes(d) && value.length > 1 ? <span className="text-ink-faint">#{value.indexOf(d) + 1}</span> : null}
          </label>
        ))}
      </div>
    </fieldset>
  );
}

/**
 * The proving section as a form: the routes a train can take (signal, approach, entry, exit
 * detectors), which routes conflict, the priority route, and how long and how many the
 * trains of the proof are. Each problem is shown beside its field.
 */
export function ProvingEditor({ rulebook, context, errors, defaultAxles, onChange }: ProvingEditorProps) {
  const proving = rulebook.proving;
  const set = (next: Proving | undefined) => onChange({ ...rulebook, proving: next });
  if (!proving) {
    return (
      <section aria-label="Proving" className="space-y-2">
        <h3 className="text-sm font-bold text-ink">Proving</h3>
        <p className="text-sm text-ink-faint">No proving section: the prover needs the routes trains take.</p>
        <Button
          onClick={() =>
            set({ routes: [{ id: "route1", signal: context.signals[0]?.id ?? "", approach: [], entry: "", exit: [] }], conflicts: [], maxAxles: defaultAxles, maxTrainsPerRoute: 2 })
          }
        >
          Add a proving section
        </Button>
      </section>
    );
  }
  const routes = proving.routes;
  const routeIds = routes.map((r) => r.id);
  const signalIds = context.signals.map((s) => s.id);
  const setRoute = (i: number, patch: Partial<ProvingRoute>) => set({ ...proving, routes: replaceItem(routes, i, { ...routes[i], ...patch }) });
  const at = (path: string) => errorsUnder(errors, `${BASE}${path}`);
  const renameRoute = (i: number, name: string): string | null => {
    if (!name) return "A route needs an id.";
    if (routeIds.some((id, j) => id === name && j !== i)) return `"${name}" is already a route.`;
    const old = routes[i].id;
    set({
      ...proving,
      routes: replaceItem(routes, i, { ...routes[i], id: name }),
      conflicts: proving.conflicts.map((pair) => pair.map((r) => (r === old ? name : r)) as [string, string]),
      ...(proving.priority === old ? { priority: name } : {}),
    });
    return null;
  };

  return (
    <section aria-label="Proving" className="space-y-4">
      <h3 className="text-sm font-bold text-ink">Proving: the routes and trains the prover tries</h3>
      {routes.map((route, i) => (
        <fieldset key={i} className="grid gap-2 rounded-md border border-panel-700 p-3 sm:grid-cols-4" aria-label={`Proving route ${route.id}`}>
          <CommitTextField label="Route id" value={route.id} onCommit={(name) => renameRoute(i, name)} />
          <SelectField label="Signal" value={route.signal} options={namesWith(route.signal, signalIds, "not a signal")} onChange={(signal) => setRoute(i, { signal })} invalid={at(`.routes[${i}].signal`).length > 0} />
          <SelectField label="Entry detector" value={route.entry} options={namesWith(route.entry, context.detectors, "not a detector")} onChange={(entry) => setRoute(i, { entry })} invalid={at(`.routes[${i}].entry`).length > 0} />
          <div className="flex items-end">
            <Button tone="danger" disabled={routes.length <= 1} onClick={() => set({ ...proving, routes: removeItem(routes, i), conflicts: proving.conflicts.filter((p) => !p.includes(route.id)) })}>
              Remove route <span className="sr-only">{route.id}</span>
            </Button>
          </div>
          <div className="sm:col-span-2">
            <DetectorChecks label="Approach detectors" value={route.approach} options={context.detectors} onChange={(approach) => setRoute(i, { approach })} invalid={at(`.routes[${i}].approach`).length > 0} />
          </div>
          <div className="sm:col-span-2">
            <DetectorChecks label="Exit detectors" value={route.exit} options={context.detectors} onChange={(exit) => setRoute(i, { exit })} invalid={at(`.routes[${i}].exit`).length > 0} />
          </div>
          <div className="sm:col-span-4">
            <FieldErrors errors={at(`.routes[${i}]`)} />
          </div>
        </fieldset>
      ))}
      <Button onClick={() => set({ ...proving, routes: [...routes, { id: uniqueName("route", routeIds), signal: signalIds[0] ?? "", approach: [], entry: "", exit: [] }] })}>Add route</Button>

      <div className="space-y-1">
        <h4 className="text-xs font-semibold text-ink-soft">Conflicting routes (never both given at once)</h4>
        {proving.conflicts.map((pair, i) => (
          <div key={i} className="flex flex-wrap items-end gap-2">
            {[0, 1].map((side) => (
              <SelectField
                key={side}
                label={side === 0 ? `Conflict ${i + 1}: route` : "with route"}
                value={pair[side]}
                options={namesWith(pair[side], routeIds, "not a route")}
                onChange={(r) => set({ ...proving, conflicts: replaceItem(proving.conflicts, i, (side === 0 ? [r, pair[1]] : [pair[0], r]) as [string, string]) })}
                invalid={at(`.conflicts[${i}]`).length > 0}
              />
            ))}
            <Button tone="danger" onClick={() => set({ ...proving, conflicts: removeItem(proving.conflicts, i) })}>
              Remove conflict {i + 1}
            </Button>
            <FieldErrors errors={at(`.conflicts[${i}]`)} />
          </div>
        ))}
        <Button disabled={routes.length < 2} onClick={() => set({ ...proving, conflicts: [...proving.conflicts, [routeIds[0], routeIds[1]]] })}>
          Add conflict
        </Button>
      </div>

      <div className="flex flex-wrap items-end gap-3">
        <SelectField
          label="Priority route"
          value={proving.priority ?? ""}
          options={[{ value: "", label: "(none)" }, ...routeIds.map((r) => ({ value: r }))]}
          onChange={(r) => {
            const { priority: _drop, ...rest } = proving;
            void _drop;
            set(r ? { ...rest, priority: r } : rest);
          }}
          invalid={at(".priority").length > 0}
        />
        <NumberField label="Longest train (axles, 1–8)" value={proving.maxAxles} min={1} onChange={(maxAxles) => set({ ...proving, maxAxles })} invalid={at(".maxAxles").length > 0} />
        <NumberField label="Trains per route (1–4)" value={proving.maxTrainsPerRoute} min={1} onChange={(maxTrainsPerRoute) => set({ ...proving, maxTrainsPerRoute })} invalid={at(".maxTrainsPerRoute").length > 0} />
        <Button tone="danger" onClick={() => set(undefined)}>
          Remove the proving section
        </Button>
      </div>
      <FieldErrors errors={[...at(".priority"), ...at(".maxAxles"), ...at(".maxTrainsPerRoute"), ...errors.filter((e) => e.path === BASE || e.path === `${BASE}.routes`)]} />
    </section>
  );
}
