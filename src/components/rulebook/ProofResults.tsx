import type { ProofPropertyDto, ProofResultDto } from "@shared/contract/rest";
import { PROPERTY_DESCRIPTIONS, type PropertyId } from "@shared/rulebook/prove";
import type { Rulebook } from "@shared/rulebook/schema";
import { SafetyNote } from "../ui/SafetyNote";
import { Counterexample } from "./Counterexample";

const count = new Intl.NumberFormat("en-GB");

function describeProperty(id: string): string {
  return PROPERTY_DESCRIPTIONS[id as PropertyId] ?? "";
}

function HoldsCell({ holds }: { holds: boolean | null }) {
  if (holds === true) return <span className="font-semibold text-aspect-clear">✓ holds</span>;
  if (holds === false) return <span className="font-semibold text-aspect-danger">✗ broken</span>;
  return <span className="font-semibold text-ink-faint">? not decided</span>;
}

function formatMs(ms: number): string {
  return ms < 1000 ? `${Math.round(ms)} ms` : `${(ms / 1000).toFixed(1)} s`;
}

const VERDICT_TEXT: Record<ProofResultDto["verdict"], string> = {
  proved: "Proved: every property holds in every reachable state of the modelled junction.",
  refuted: "Refuted: at least one property is broken. Each broken property has the shortest run that breaks it.",
  unfinished: "Unfinished: the search stopped before it could decide every property.",
};
const VERDICT_STYLE: Record<ProofResultDto["verdict"], string> = {
  proved: "border-aspect-clear/70 text-aspect-clear",
  refuted: "border-aspect-danger/70 text-aspect-danger",
  unfinished: "border-panel-600 text-ink-soft",
};

interface ProofResultsProps {
  slug: string;
  version: number;
  result: ProofResultDto;
  rulebook: Rulebook;
  detectorNames: Record<string, string>;
  /** "Proved on … by …", when the result is a stored one. */
  heading?: string;
}

/** What a proof covers: the environment the prover explored, in the rulebook's own terms. */
function ModelledEnvironment({ rulebook }: { rulebook: Rulebook }) {
  const proving = rulebook.proving;
  if (!proving) return null;
  return (
    <p className="text-sm text-ink-soft">
      A proof covers the modelled environment only: trains on the routes {proving.routes.map((r) => r.id).join(", ")} of 1 to {proving.maxAxles}{" "}
      {proving.maxAxles === 1 ? "axle" : "axles"}, at most {proving.maxTrainsPerRoute} at once on a route, detectors that give exactly one pulse per
      axle, and quiet triggers firing at any moment. Missed or extra pulses, longer trains, points, people and anything else outside the
      rulebook&apos;s proving section are not covered.
    </p>
  );
}

export function ProofResults({ slug, version, result, rulebook, detectorNames, heading }: ProofResultsProps) {
  const broken = result.properties.filter((p): p is ProofPropertyDto & { counterexample: NonNullable<ProofPropertyDto["counterexample"]> } => p.holds === false && Array.isArray(p.counterexample));
  return (
    <div className="space-y-4">
      <div className={`rounded-md border p-3 ${VERDICT_STYLE[result.verdict]}`} role="status">
        <p className="font-bold">{VERDICT_TEXT[result.verdict]}</p>
        {result.reason ? <p className="text-sm text-ink-soft">Why: {result.reason}.</p> : null}
        <p className="text-sm text-ink-soft">
          {count.format(result.stats.states)} states explored in {formatMs(result.stats.ms)}
          {heading ? ` · ${heading}` : ""}
        </p>
      </div>

      <div className="overflow-x-auto rounded-md border border-panel-700">
        <table className="w-full border-collapse text-left text-sm">
          <caption className="sr-only">Proof of rulebook version {version}, property by property</caption>
          <thead className="bg-panel-850 text-ink-soft">
            <tr>
              <th scope="col" className="px-3 py-2">Property</th>
              <th scope="col" className="px-3 py-2">Means</th>
              <th scope="col" className="px-3 py-2">Result</th>
            </tr>
          </thead>
          <tbody>
            {result.properties.map((p) => (
              <tr key={p.id} className="border-t border-panel-700 align-top">
                <th scope="row" className="whitespace-nowrap px-3 py-2 font-semibold">{p.id}</th>
                <td className="px-3 py-2 text-ink-soft">
                  {describeProperty(p.id)}
                  {p.detail ? <span className="block text-xs text-ink-faint">{p.detail}</span> : null}
                </td>
                <td className="whitespace-nowrap px-3 py-2">
                  <HoldsCell holds={p.holds} />
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>

      {broken.map((p) => (
        <section key={p.id} aria-label={`Counterexample for ${p.id}`} className="rounded-md border border-aspect-danger/50 p-3">
          <h3 className="mb-2 font-bold">
            Counterexample for <span className="text-aspect-danger">{p.id}</span>
            <span className="font-normal text-ink-soft">
              {" "}
              — {p.counterexample.length} {p.counterexample.length === 1 ? "move" : "moves"}
            </span>
          </h3>
          <Counterexample slug={slug} version={version} moves={p.counterexample} detectorNames={detectorNames} />
        </section>
      ))}

      <ModelledEnvironment rulebook={rulebook} />
      <SafetyNote />
    </div>
  );
}
