/**
 * The prover: an exhaustive, breadth-first check of a rulebook against the junction's
 * protection facts (CONTRACT.md §5). The parts, in the order a newcomer reads them:
 *
 * - `proving/model.ts` — routes, facing groups, modelled points and engine inputs as indices;
 * - `proving/abstraction.ts` — how the real `step` is fed (time left out) and what an engine
 *   state means to the environment (`EngineFacts`);
 * - `proving/environment.ts` — packed trains and every §5 move, each rule written once;
 * - `proving/engineStore.ts` — interned engine states and the memoised `step` per input;
 * - `proving/trainCodec.ts` — the compact (bit-field) form the state table keeps trains in;
 * - `proving/stateTable.ts` — typed-array storage and the open-addressing state table;
 * - `proving/properties.ts` — property ids, per-state verdicts, `no-stuck-train`;
 * - `proving/search.ts` — the breadth-first search and its limits;
 * - `proving/moves.ts` and `proving/replay.ts` — counterexamples and their replay.
 *
 * See docs/prover.md for the modelling decisions. Pure: no I/O and no clock.
 *
 * @example
 * const result = prove(rulebook, { now: () => performance.now(), maxMs: 60_000 });
 * if (result.verdict === "refuted") console.log(result.properties.find((p) => p.holds === false));
 */
export { isUnderflowChange } from "./proving/abstraction";
export type { Move } from "./proving/moves";
export {
  PROPERTIES,
  PROPERTY_DESCRIPTIONS,
  PROPERTY_IDS,
  SAFETY_PROPERTY_IDS,
  type PropertyId,
} from "./proving/properties";
export { replayCounterexample, type Replay, type ReplayStep, type TrainView } from "./proving/replay";
export {
  DEFAULT_MAX_BYTES,
  DEFAULT_MAX_STATES,
  prove,
  type ProofResult,
  type PropertyResult,
  type ProveOptions,
  type StopCause,
} from "./proving/search";
