/**
 * What to do about a proof that stopped at a limit. The number of states grows steeply with
 * the longest train (`maxAxles`: every length from 1 up is explored) and with the trains
 * allowed on a route at once (`maxTrainsPerRoute`), so the advice names those two settings
 * with their present values and suggests which to reduce first.
 *
 * @example
 * unfinishedAdvice({ maxAxles: 4, maxTrainsPerRoute: 2 })
 * // "reduce proving.maxAxles (now 4) or proving.maxTrainsPerRoute (now 2) and prove again"
 */
import type { Proving } from "./schema";

export function unfinishedAdvice(proving: Pick<Proving, "maxAxles" | "maxTrainsPerRoute"> | undefined): string {
  if (!proving) return "add a proving section with routes, then prove again";
  const { maxAxles, maxTrainsPerRoute } = proving;
  if (maxAxles <= 1 && maxTrainsPerRoute <= 1) {
    return "proving.maxAxles and proving.maxTrainsPerRoute are already 1: split the junction into fewer routes or simplify the rules, then prove again";
  }
  // Axles first: each extra axle multiplies every train's positions; a second train is often the case that matters.
  const first = maxAxles > 1 ? `proving.maxAxles (now ${maxAxles})` : null;
  const second = maxTrainsPerRoute > 1 ? `proving.maxTrainsPerRoute (now ${maxTrainsPerRoute})` : null;
  return `reduce ${[first, second].filter(Boolean).join(" or ")} and prove again`;
}

/** The reason of an unfinished proof with the advice added; cancelled proofs need none. */
export function unfinishedReason(reason: string | undefined, proving: Pick<Proving, "maxAxles" | "maxTrainsPerRoute"> | undefined): string {
  const base = reason ?? "the proof did not finish";
  if (/^cancelled/.test(base)) return base;
  return `${base}: ${unfinishedAdvice(proving)}`;
}
