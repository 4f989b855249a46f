import type { LayoutDetail } from "@shared/contract/rest";
import type { ProvingRoute } from "@shared/rulebook/schema";
import type { RoutePlacementResult } from "@shared/layout/routePlacement";
import { PlacementStrip } from "./PlacementStrip";
import type { PlacementFormValues } from "./placementForm";

interface RouteChecksProps {
  layout: Pick<LayoutDetail, "detectors" | "signals">;
  routes: readonly ProvingRoute[];
  result: RoutePlacementResult | null;
  values: PlacementFormValues;
}

const tone = (ok: boolean | null) => (ok === false ? "text-notice-error" : ok ? "text-notice-ok" : "text-ink-faint");

/** Per route: is the approach detector far enough, is the clearance detector past the fouling point with the longest train. */
export function RouteChecks({ layout, routes, result, values }: RouteChecksProps) {
  if (routes.length === 0) return <p className="text-sm text-ink-faint">No routes yet: they come from the rulebook's proving section (make one from a template).</p>;
  if (!result) return <p className="text-sm text-ink-faint">Fill in the assumptions to check the routes.</p>;
  const detectors = new Map(layout.detectors.map((d) => [d.id, d]));
  const signals = new Map(layout.signals.map((s) => [s.id, s]));
  return (
    <div className="space-y-5">
      {result.routes.map((row) => {
        const route = routes.find((r) => r.id === row.route);
        const signal = signals.get(row.signal);
        const c = row.clearance;
        const exit = c ? detectors.get(c.detector) : undefined;
        const approach = detectors.get(row.approach.detector);
        // Drawn from the signal, in the direction of travel; only what lies on the signal's line is to scale.
        const dir = signal && approach && approach.line === signal.line ? Math.sign(signal.at - approach.at) || 1 : 1;
        const onSignalLine = (at: number | null | undefined, line: string | undefined) => (signal && at !== null && at !== undefined && line === signal.line ? dir * (at - signal.at) : null);
        const exitEntry = route ? detectors.get(route.entry) : undefined;
        const beyond = (at: number | null) => onSignalLine(at, exit?.line) ?? (at !== null && exit && exitEntry && exit.line === exitEntry.line ? Math.abs(at - exitEntry.at) : null);
        return (
          <section key={row.route} aria-label={`Route ${row.route}`} className="space-y-2 border-t border-panel-700 pt-3" data-placement-route={row.route}>
            <h3 className="font-bold">
              Route {row.route}: {row.approach.detector} → {row.signal}
              {c ? ` → ${c.detector}` : ""}
            </h3>
            <ul className="space-y-1 text-sm">
              <li className={tone(row.approach.ok)} data-check="approach" data-ok={String(row.approach.ok)}>
                {row.approach.ok === false ? "Too close: " : row.approach.ok ? "Far enough: " : ""}
                {row.approach.message}
              </li>
              {c?.findings.map((f, i) => (
                <li key={i} className={tone(f.ok)} data-check={i === 0 ? "clearance" : "room"} data-ok={String(f.ok)}>
                  {i === 0 && c.foulingPointFrom ? `(fouling point at ${c.foulingPointFrom}) ` : ""}
                  {f.message}
                </li>
              ))}
            </ul>
            <PlacementStrip
              route={row.route}
              approachM={row.approach.actualM}
              requiredM={row.approach.requiredM}
              foulingM={c ? beyond(c.foulingPointAt) : null}
              clearanceM={exit ? beyond(exit.at) : null}
              rearOverhangM={values.rearOverhangM}
              longestTrainM={values.longestTrainM}
              approachId={row.approach.detector}
              signalId={row.signal}
              clearanceId={c?.detector ?? null}
            />
          </section>
        );
      })}
    </div>
  );
}
