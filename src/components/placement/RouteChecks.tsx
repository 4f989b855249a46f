import { checkClearance, type ApproachResult } from "../../../shared/layout/placement";
import type { RouteDistances } from "../../lib/placementRoutes";
import { PlacementStrip } from "./PlacementStrip";
import type { PlacementFormValues } from "./placementForm";

interface RouteChecksProps {
  rows: RouteDistances[];
  result: ApproachResult | null;
  values: PlacementFormValues;
}

/** Per route: is the approach detector far enough, is the clearance detector past the fouling point, does the longest train fit. */
export function RouteChecks({ rows, result, values }: RouteChecksProps) {
  if (rows.length === 0) return <p className="text-sm text-ink-faint">No routes yet: they come from the rulebook's proving section (make one from a template).</p>;
  return (
    <div className="space-y-5">
      {rows.map((row) => {
        const ok = result && row.approachM !== null ? row.approachM >= result.totalM : null;
        const c = row.clearance;
        const sign = row.direction === "down" ? -1 : 1;
        const foulingAt = c ? (c.points ? c.points.at + sign * values.foulingBeyondPointsM : 0) : null;
        const clearance =
          c && foulingAt !== null
            ? checkClearance({
                foulingPointAt: foulingAt,
                clearanceDetectorAt: c.detector.at,
                rearOverhangM: values.rearOverhangM,
                longestTrainM: values.longestTrainM,
                nextStopAt: c.nextStopAt,
                direction: row.direction,
              })
            : null;
        // Drawn from the signal: on one line the metres agree; across lines the branch meets at the points.
        const signalAt = row.signal?.at ?? 0;
        const fromSignal = (at: number) => (c && row.signal && c.detector.line === row.signal.line ? sign * (at - signalAt) : Math.abs(at - (c?.points?.at ?? 0)) + 1);
        return (
          <section key={row.route} aria-label={`Route ${row.route}`} className="space-y-2 border-t border-panel-700 pt-3" data-placement-route={row.route}>
            <h3 className="font-bold">
              Route {row.route}: {row.approach?.id ?? "?"} → {row.signal?.id ?? "?"}
              {c ? ` → ${c.detector.id}` : ""}
            </h3>
            <ul className="space-y-1 text-sm">
              <li className={ok === false ? "text-notice-error" : ok ? "text-notice-ok" : "text-ink-faint"} data-check="approach">
                {row.approachM === null
                  ? "Approach detector and signal are on different lines: measure on the layout."
                  : ok === null
                    ? `Approach detector ${row.approachM.toFixed(2)} m before the signal.`
                    : ok
                      ? `Far enough: ${row.approachM.toFixed(2)} m before the signal, ${result!.totalM.toFixed(2)} m needed.`
                      : `Too close by ${(result!.totalM - row.approachM).toFixed(2)} m: ${row.approachM.toFixed(2)} m before the signal, ${result!.totalM.toFixed(2)} m needed.`}
              </li>
              {clearance ? (
                clearance.findings.map((f, i) => (
                  <li key={i} className={f.ok ? "text-notice-ok" : "text-notice-error"} data-check={i === 0 ? "clearance" : "train"}>
                    {c!.points ? "" : `(fouling point taken at the start of line ${c!.detector.line}) `}
                    {f.message}
                  </li>
                ))
              ) : (
                <li className="text-ink-faint">No exit detector on this route to check clearance.</li>
              )}
              {clearance && c && c.nextStopAt === undefined ? <li className="text-ink-faint">The longest train is not checked for room: the route names no stop beyond its clearance detector.</li> : null}
            </ul>
            <PlacementStrip
              route={row.route}
              approachM={row.approachM}
              requiredM={result?.totalM ?? null}
              foulingM={c && foulingAt !== null ? fromSignal(foulingAt) : null}
              clearanceM={c ? fromSignal(c.detector.at) : null}
              rearOverhangM={values.rearOverhangM}
              longestTrainM={values.longestTrainM}
              approachId={row.approach?.id ?? "?"}
              signalId={row.signal?.id ?? "?"}
              clearanceId={c?.detector.id ?? null}
            />
          </section>
        );
      })}
    </div>
  );
}
