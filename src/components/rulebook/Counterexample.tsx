import { Link } from "react-router-dom";
import type { ProofMoveDto } from "@shared/contract/rest";
import { encodeTrace } from "../../lib/simulation";
import { paths } from "../../lib/paths";

interface CounterexampleProps {
  slug: string;
  version: number;
  moves: ProofMoveDto[];
  /** Detector id → name, for plain words. */
  detectorNames: Record<string, string>;
}

/**
 * A counterexample in plain words, one line per move. Trains are numbered from 1 in order
 * of arrival (CONTRACT.md §5), so arrivals are numbered here as the list is read.
 */
export function describeProofMoves(moves: ProofMoveDto[], detectorNames: Record<string, string> = {}): string[] {
  let arrivals = 0;
  return moves.map((move) => {
    switch (move.type) {
      case "arrive":
        arrivals++;
        return `Train ${arrivals}, of ${move.axles} ${move.axles === 1 ? "axle" : "axles"}, arrives on the ${move.route} route.`;
      case "pulse": {
        const name = detectorNames[move.detector];
        return `An axle of train ${move.train} (${move.route} route) passes detector ${move.detector}${name ? ` (${name})` : ""}.`;
      }
      case "quiet":
        return `The quiet trigger of rule "${move.rule}" fires (the prover does not trust timing, so this may happen at any moment).`;      case "points":
        return move.lies === "moving"
          ? `Points ${move.points} start to move (reported moving).`
          : `Points ${move.points} are reported lying ${move.lies}.`;
    }
  });
}

/** The link that opens the simulator on this version with the counterexample loaded. */
export function simulatorTraceLink(slug: string, version: number, moves: ProofMoveDto[]): string {
  return paths.simulate({ slug }, { query: { version, trace: encodeTrace(moves) } });
}

/** The shortest run that breaks a property, numbered, with a link to play it step by step. */
export function Counterexample({ slug, version, moves, detectorNames }: CounterexampleProps) {
  return (
    <div className="space-y-2">
      {moves.length === 0 ? (
        <p className="text-sm">Broken at the start: the rulebook&apos;s initial values, once settled, already break it, before any train moves.</p>
      ) : (
        <ol className="list-decimal space-y-0.5 pl-6 text-sm">
          {describeProofMoves(moves, detectorNames).map((line, i) => (
            // The moves are a fixed list: its index is the move's identity.
            <li key={i}>{line}</li>
          ))}
        </ol>
      )}
      <Link to={simulatorTraceLink(slug, version, moves)} className="inline-block rounded-md border border-brass px-3 py-1 text-sm font-semibold text-brass hover:bg-panel-800">
        Play in simulator
      </Link>
    </div>
  );
}
