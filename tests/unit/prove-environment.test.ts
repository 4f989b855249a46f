/**
 * The environment's moves (shared/rulebook/proving/environment.ts) against a plain reading of
 * CONTRACT.md §5 written here on arrays, on random train positions: the packed hot path and
 * the rule as the contract states it must offer exactly the same axle crossings.
 */
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import type { EngineFacts } from "@shared/rulebook/proving/abstraction";
import { forEachMove, moveCodes, MOVE_ARRIVAL, packing, SLOT_AXLES, SLOT_POS } from "@shared/rulebook/proving/environment";
import { compileModel } from "@shared/rulebook/proving/model";
import { rulebookSchema } from "@shared/rulebook/schema";

const rulebook = rulebookSchema.parse({
  format: "blocklight.rulebook/1",
  rules: [],
  proving: { routes: [{ id: "up", signal: "U1", approach: ["UA", "UB"], entry: "UE", exit: ["UX", "UZ"] }], maxAxles: 4, maxTrainsPerRoute: 2 },
});
const model = compileModel(rulebook);
const pack = packing(model);
const codes = moveCodes(model);
const LENGTH = 5; // UA UB UE UX UZ
const ENTRY = 2;

/** §5 in words: order, spacing, the train ahead has cleared, entry only at a proceed. */
function referenceMoves(trains: number[][], proceed: boolean): string[] {
  const out: string[] = [];
  trains.forEach((pos, t) => {
    pos.forEach((p, k) => {
      if (p >= LENGTH) return;
      if (k > 0 && pos[k - 1] <= p) return; // the axle ahead has crossed it
      if (k < pos.length - 1 && pos[k + 1] < p) return; // the axle behind has crossed the previous one
      if (t > 0 && trains[t - 1][trains[t - 1].length - 1] <= p) return; // the train ahead has cleared it
      if (k === 0 && p === ENTRY && !proceed) return;
      out.push(`${t}:${k}`);
    });
  });
  return out;
}

/** A train whose neighbouring axles are at most one detector apart, leading axle first. */
const trainArb = fc
  .tuple(fc.integer({ min: 0, max: LENGTH - 1 }), fc.array(fc.boolean(), { minLength: 0, maxLength: 3 }))
  .map(([lead, steps]) => {
    const pos = [lead];
    for (const back of steps) pos.push(Math.max(0, pos[pos.length - 1] - (back ? 1 : 0)));
    return pos;
  });

describe("the environment's axle moves", () => {
  it("offer exactly the crossings §5 allows, on random positions", () => {
    fc.assert(
      fc.property(fc.array(trainArb, { minLength: 1, maxLength: 2 }), fc.boolean(), (raw, proceed) => {
        // The train behind never overtakes: its leading axle has not passed the one ahead's last axle.
        const trains = raw.slice(0, 1);
        if (raw[1] && raw[1][0] < raw[0][raw[0].length - 1]) trains.push(raw[1]);
        const cur = new Uint8Array(pack.width);
        cur[0] = trains.length;
        trains.forEach((pos, t) => {
          const slot = 1 + t * pack.slotWidth;
          cur[slot + SLOT_AXLES] = pos.length;
          // Past entry the route is fixed (the only route of its group).
          cur[slot + 1] = pos[0] > ENTRY ? 1 : 0;
          pos.forEach((p, k) => (cur[slot + SLOT_POS + k] = p));
        });
        const facts: EngineFacts = { proceedMask: proceed ? 1 : 0, faulted: false, conflictingProceeds: false, armed: [], routesSetMask: 1, lies: [], powerMoves: [], handMoves: [] };
        const offered: string[] = [];
        forEachMove(model, pack, codes, facts, cur, new Uint8Array(pack.width), (code, _input, flags) => {
          if (flags & MOVE_ARRIVAL) return;
          const rest = Math.floor((code - codes.pulseBase) / codes.choices);
          offered.push(`${Math.floor(rest / model.maxAxles) % model.maxTrains}:${rest % model.maxAxles}`);
        });
        expect(offered).toEqual(referenceMoves(trains, proceed));
      }),
      { numRuns: 2000 },
    );
  });
});
