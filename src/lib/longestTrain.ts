/**
 * The longest train the society runs on a layout, as entered on the placement page, kept in
 * localStorage per layout: the proving forms take their train length (axles) from it.
 */
export interface LongestTrain {
  lengthM: number;
  axles: number;
}

/** The prover explores 1 to 8 axles a train (CONTRACT.md §4 `maxAxles`). */
export const PROVER_MAX_AXLES = 8;
export const DEFAULT_PROVING_AXLES = 2;

const keyFor = (slug: string) => `blocklight.longestTrain.${slug}`;

function storage(): Storage | null {
  try {
    return typeof window === "undefined" ? null : window.localStorage;
  } catch {
    return null;
  }
}

export function readLongestTrain(slug: string): LongestTrain | null {
  try {
    const value = JSON.parse(storage()?.getItem(keyFor(slug)) ?? "null") as LongestTrain | null;
    return value && Number.isFinite(value.lengthM) && Number.isInteger(value.axles) ? value : null;
  } catch {
    return null;
  }
}

export function writeLongestTrain(slug: string, train: LongestTrain): void {
  storage()?.setItem(keyFor(slug), JSON.stringify(train));
}

/** The proof's train length: the longest train's axles, within what the prover explores. */
export function provingAxles(slug: string): number {
  const train = readLongestTrain(slug);
  return train ? Math.max(1, Math.min(PROVER_MAX_AXLES, train.axles)) : DEFAULT_PROVING_AXLES;
}
