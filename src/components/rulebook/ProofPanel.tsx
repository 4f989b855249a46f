/**
 * EMPTY SLOT — the prover UI (run a proof, progress, verdict per property, counterexample
 * replay via /layouts/:slug/simulate?trace=…) will be built here later. The rulebook page
 * already renders it beside the selected version, so filling it in needs no page changes.
 */
export interface ProofPanelProps {
  slug: string;
  version: number;
}

export function ProofPanel(_props: ProofPanelProps): null {
  return null;
}
