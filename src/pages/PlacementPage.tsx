import { useForm } from "react-hook-form";
import { useParams } from "react-router-dom";
import type { LayoutDetail } from "../../shared/contract/rest";
import { approachDistance, type ApproachResult } from "../../shared/layout/placement";
import type { Rulebook } from "../../shared/rulebook/schema";
import { useLayout } from "../api/layouts";
import { useRulebookVersion } from "../api/rulebooks";
import { Panel } from "../components/ui/Panel";
import { SafetyNote } from "../components/ui/SafetyNote";
import { LoadError, Loading } from "../components/ui/Status";

interface PlacementForm {
  prototypeKmh: number;
  reactionS: number;
  controllerLatencyMs: number;
  decelerationMps2: number;
  marginM: number;
}

/** Starting values for a garden line; every society should measure its own. */
const DEFAULTS: PlacementForm = { prototypeKmh: 30, reactionS: 1, controllerLatencyMs: 150, decelerationMps2: 0.15, marginM: 0.5 };

const FIELDS: { name: keyof PlacementForm; label: string; step: string; help: string }[] = [
  { name: "prototypeKmh", label: "Line speed (scale km/h)", step: "1", help: "the fastest train approaching the signal" },
  { name: "reactionS", label: "Driver reaction (s)", step: "0.1", help: "from the aspect changing to starting to brake" },
  { name: "controllerLatencyMs", label: "Controller latency (ms)", step: "10", help: "pulse → server → aspect on the lamp; see npm run bench" },
  { name: "decelerationMps2", label: "Braking (model m/s²)", step: "0.01", help: "measured: speed² ÷ (2 × stopping distance)" },
  { name: "marginM", label: "Margin (m)", step: "0.1", help: "kept in hand for a drifting train" },
];

interface ApproachRow {
  route: string;
  signal: string;
  detector: string;
  distanceM: number | null;
}

/** For each proving route: the distance from its first approach detector to its signal. */
function approachRows(layout: LayoutDetail, rulebook: Rulebook | undefined): ApproachRow[] {
  const detectors = new Map(layout.detectors.map((d) => [d.id, d]));
  const signals = new Map(layout.signals.map((s) => [s.id, s]));
  return (rulebook?.proving?.routes ?? []).map((route) => {
    const detector = detectors.get(route.approach[0]);
    const signal = signals.get(route.signal);
    const sameLine = detector && signal && detector.line === signal.line;
    return {
      route: route.id,
      signal: route.signal,
      detector: route.approach[0],
      distanceM: sameLine ? Math.abs(signal.at - detector.at) : null,
    };
  });
}

function Figure({ label, value }: { label: string; value: string }) {
  return (
    <div>
      <dt className="text-xs text-ink-faint">{label}</dt>
      <dd className="text-lg">{value}</dd>
    </div>
  );
}

export default function PlacementPage() {
  const { slug = "" } = useParams();
  const layout = useLayout(slug);
  const live = layout.data?.versions.find((v) => v.live)?.version;
  const rulebook = useRulebookVersion(slug, live);
  const { register, watch } = useForm<PlacementForm>({ defaultValues: DEFAULTS, mode: "onChange" });
  const values = watch();

  if (layout.isPending) return <Loading what="the layout" />;
  if (layout.isError) return <LoadError error={layout.error} what="the layout" />;
  const l = layout.data;

  let result: ApproachResult | null = null;
  let problem: string | null = null;
  try {
    result = approachDistance({
      ratio: l.scale.ratio,
      speed: { prototypeKmh: Number(values.prototypeKmh) },
      reactionS: Number(values.reactionS),
      controllerLatencyMs: Number(values.controllerLatencyMs),
      decelerationMps2: Number(values.decelerationMps2),
      marginM: Number(values.marginM),
    });
  } catch (err) {
    problem = err instanceof Error ? err.message : String(err);
  }
  const rows = approachRows(l, rulebook.data?.rulebook);

  return (
    <div className="space-y-6">
      <div>
        <h1 className="text-2xl font-bold">Detector placement — {l.name}</h1>
        <p className="text-sm text-ink-soft">
          {l.scale.name} scale, 1:{l.scale.ratio}. How far before each signal its approach detector must sit so the aspect can change before a driver
          has to start slowing.
        </p>
      </div>
      <div className="grid gap-6 lg:grid-cols-2">
        <Panel title="Assumptions">
          <form className="grid gap-3" onSubmit={(e) => e.preventDefault()}>
            {FIELDS.map((field) => (
              <label key={field.name} className="grid gap-1 text-sm">
                <span>{field.label}</span>
                <input
                  type="number"
                  step={field.step}
                  min="0"
                  className="rounded border border-panel-600 bg-panel-950 px-2 py-1"
                  {...register(field.name, { valueAsNumber: true })}
                />
                <span className="text-xs text-ink-faint">{field.help}</span>
              </label>
            ))}
          </form>
        </Panel>
        <Panel title="Shortest safe approach distance">
          {problem ? (
            <p className="text-notice-error">{problem}</p>
          ) : result ? (
            <dl className="grid grid-cols-2 gap-3">
              <Figure label="Model speed" value={`${result.modelMps.toFixed(2)} m/s`} />
              <Figure label="While the controller reacts" value={`${result.latencyM.toFixed(2)} m`} />
              <Figure label="While the driver reacts" value={`${result.reactionM.toFixed(2)} m`} />
              <Figure label="While braking" value={`${result.brakingM.toFixed(2)} m`} />
              <Figure label="Margin" value={`${result.marginM.toFixed(2)} m`} />
              <Figure label="Approach detector at least" value={`${result.totalM.toFixed(2)} m before the signal`} />
            </dl>
          ) : null}
        </Panel>
      </div>
      <Panel title="This layout's approach detectors">
        <table className="w-full text-sm">
          <caption className="sr-only">Approach detectors against the shortest safe distance</caption>
          <thead className="text-left text-ink-faint">
            <tr>
              <th>Route</th>
              <th>Signal</th>
              <th>Approach detector</th>
              <th>Distance (m)</th>
              <th>Verdict</th>
            </tr>
          </thead>
          <tbody>
            {rows.map((row) => {
              const ok = result && row.distanceM !== null ? row.distanceM >= result.totalM : null;
              return (
                <tr key={row.route} className="border-t border-panel-700">
                  <td>{row.route}</td>
                  <td>{row.signal}</td>
                  <td>{row.detector}</td>
                  <td>{row.distanceM === null ? "on another line" : row.distanceM.toFixed(2)}</td>
                  <td className={ok === false ? "text-notice-error" : ok ? "text-notice-ok" : "text-ink-faint"}>
                    {ok === null ? "measure on the layout" : ok ? "far enough" : `too close by ${(result!.totalM - row.distanceM!).toFixed(2)} m`}
                  </td>
                </tr>
              );
            })}
          </tbody>
        </table>
      </Panel>
      <SafetyNote />
    </div>
  );
}
