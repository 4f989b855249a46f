import { useEffect, useMemo } from "react";
import { useForm } from "react-hook-form";
import { useParams } from "react-router-dom";
import { METRES_PER_MILE, type SpeedInput } from "@shared/layout/placement";
import { checkRoutePlacement, type RoutePlacementResult } from "@shared/layout/routePlacement";
import { useLayout } from "../api/layouts";
import { useRulebookVersion } from "../api/rulebooks";
import { AssumptionsForm } from "../components/placement/AssumptionsForm";
import { PLACEMENT_DEFAULTS, placementFormSchema, type PlacementFormValues } from "../components/placement/placementForm";
import { RouteChecks } from "../components/placement/RouteChecks";
import { Panel } from "../components/ui/Panel";
import { SafetyNote } from "../components/ui/SafetyNote";
import { LoadError, Loading } from "../components/ui/Status";
import { readLongestTrain, writeLongestTrain } from "../lib/longestTrain";
import { zodResolver } from "../lib/zodResolver";

function Figure({ label, value }: { label: string; value: string }) {
  return (
    <div>
      <dt className="text-xs text-ink-faint">{label}</dt>
      <dd className="text-lg">{value}</dd>
    </div>
  );
}

function speedOf(v: PlacementFormValues): SpeedInput {
  if (v.speedMode === "mph") return { prototypeKmh: (Number(v.prototypeMph) * METRES_PER_MILE) / 1000 };
  if (v.speedMode === "timed") return { distanceM: Number(v.timedDistanceM), seconds: Number(v.timedSeconds) };
  return { prototypeKmh: Number(v.prototypeKmh) };
}

/** Detector placement for this layout: its scale, its routes' real distances, and the longest train. */
export default function PlacementPage() {
  const { slug = "" } = useParams();
  const layout = useLayout(slug);
  const versions = layout.data?.versions ?? [];
  // The live rulebook's routes, else the newest version's (a junction not yet published).
  const version = versions.find((v) => v.live)?.version ?? [...versions].sort((a, b) => b.version - a.version)[0]?.version;
  const rulebook = useRulebookVersion(slug, version);
  const stored = useMemo(() => readLongestTrain(slug), [slug]);
  const form = useForm<PlacementFormValues>({
    resolver: zodResolver(placementFormSchema),
    mode: "onChange",
    defaultValues: { ...PLACEMENT_DEFAULTS, ...(stored ? { longestTrainM: stored.lengthM, longestTrainAxles: stored.axles } : {}) },
  });
  const values = form.watch();
  const lengthM = Number(values.longestTrainM);
  const axles = Number(values.longestTrainAxles);
  useEffect(() => {
    if (Number.isFinite(lengthM) && Number.isInteger(axles) && axles >= 1) writeLongestTrain(slug, { lengthM, axles });
  }, [slug, lengthM, axles]);

  if (layout.isPending) return <Loading what="the layout" />;
  if (layout.isError) return <LoadError error={layout.error} what="the layout" />;
  const l = layout.data;

  const routes = rulebook.data?.rulebook.proving?.routes ?? [];
  let checked: RoutePlacementResult | null = null;
  let problem: string | null = null;
  try {
    checked = checkRoutePlacement({
      layout: l,
      routes,
      approach: {
        speed: speedOf(values),
        reactionS: Number(values.reactionS),
        controllerLatencyMs: Number(values.controllerLatencyMs),
        decelerationMps2: Number(values.decelerationMps2),
        marginM: Number(values.marginM),
      },
      clearance: { longestTrainM: Number(values.longestTrainM), rearOverhangM: Number(values.rearOverhangM) },
    });
    if (!Number.isFinite(checked.required.totalM)) throw new RangeError("fill in every figure");
  } catch (err) {
    checked = null;
    problem = err instanceof Error ? err.message : String(err);
  }
  const result = checked?.required ?? null;

  return (
    <div className="space-y-6">
      <div>
        <h1 className="text-2xl font-bold">Detector placement — {l.name}</h1>
        <p className="text-sm text-ink-soft">
          {l.scale.name} scale, 1:{l.scale.ratio}. Is each approach detector far enough before its signal for the aspect to change before a driver must
          slow, and does each clearance detector see the whole train past the fouling point?
        </p>
      </div>
      <div className="grid gap-6 lg:grid-cols-2">
        <Panel title="Assumptions">
          <AssumptionsForm form={form} ratio={l.scale.ratio} />
        </Panel>
        <Panel title="Shortest safe approach distance">
          {problem ? (
            <p className="text-notice-error">{problem}</p>
          ) : result ? (
            <dl className="grid grid-cols-2 gap-3">
              <Figure label="Model speed" value={`${result.modelMps.toFixed(2)} m/s (${result.prototypeKmh.toFixed(1)} km/h at scale)`} />
              <Figure label="While the controller reacts" value={`${result.latencyM.toFixed(2)} m`} />
              <Figure label="While the driver reacts" value={`${result.reactionM.toFixed(2)} m`} />
              <Figure label="While braking" value={`${result.brakingM.toFixed(2)} m`} />
              <Figure label="Margin" value={`${result.marginM.toFixed(2)} m`} />
              <Figure label="Approach detector at least" value={`${result.totalM.toFixed(2)} m before the signal`} />
            </dl>
          ) : null}
        </Panel>
      </div>
      <Panel title={`This layout's routes${version ? ` (rulebook version ${version})` : ""}`}>
        <RouteChecks layout={l} routes={routes} result={checked} values={values} />
      </Panel>
      <SafetyNote />
    </div>
  );
}
