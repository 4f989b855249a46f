/**
 * The state table's compact form of packed trains (shared/rulebook/proving/trainCodec.ts): on
 * random walks of every environment (plain, lazy arrival, lazy length) over a converging
 * junction of real length and the demo's facing junction, every train position the environment produces comes back
 * byte for byte from its words, and the table finds each state again under its first id.
 */
import fc from "fast-check";
import { wrenfoldLoopLayout } from "@shared/demo/fernmoor";
import { describe, expect, it } from "vitest";
import type { EngineFacts } from "@shared/rulebook/proving/abstraction";
import { forEachMove, LAZY_ARRIVAL, LAZY_LENGTH, moveCodes, packing, PLAIN, type Reduction } from "@shared/rulebook/proving/environment";
import { compileModel } from "@shared/rulebook/proving/model";
import { StateTable } from "@shared/rulebook/proving/stateTable";
import { TrainCodec } from "@shared/rulebook/proving/trainCodec";
import type { Rulebook } from "@shared/rulebook/schema";
import { convergingJunction } from "@shared/rulebook/templates";

const converging = convergingJunction({
  routes: [
    { id: "main", signal: "M1", approach: ["MA", "MB"], entry: "ME", exit: ["MX", "JX"] },
    { id: "branch", signal: "B1", approach: ["BA"], entry: "BE", exit: ["JX"] },
  ],
  order: "priority",
  priority: "main",
  maxAxles: 8,
  maxTrainsPerRoute: 4,
});
/** The demo's facing junction (Wrenfold Loop, power-worked points) at its proving sizes. */
const facing = wrenfoldLoopLayout().rulebook as Rulebook;

/** Walks the environment at random (random signals and points at each step), checking every position it offers. */
function walk(rulebook: Rulebook, level: Reduction, choices: number[], signals: number[]): void {
  const model = compileModel(rulebook);
  const pack = packing(model);
  const codes = moveCodes(model);
  const codec = new TrainCodec(model, pack);
  const table = new StateTable(codec);
  const words = new Int32Array(codec.words);
  const back = new Uint8Array(pack.width);
  let cur: Uint8Array = new Uint8Array(pack.width);
  const nxt = new Uint8Array(pack.width);
  const ids = new Map<string, number>();
  for (let i = 0; i < choices.length; i++) {
    const all = 2 ** model.routes.length - 1;
    const facts: EngineFacts = { proceedMask: signals[i] & all, faulted: false, conflictingProceeds: false, armed: [], routesSetMask: (signals[i] >> 8) & all, lies: [], powerMoves: [], handMoves: [] };
    const offered: Uint8Array[] = [];
    forEachMove(model, pack, codes, facts, cur, nxt, () => offered.push(nxt.slice()), level);
    for (const v of offered) {
      codec.encode(v, words, 0);
      codec.decode(words, 0, back);
      expect([...back]).toEqual([...v]);
      const key = v.join(",");
      const id = table.findOrAdd(0, v);
      expect(id).toBe(ids.get(key) ?? table.size - 1);
      ids.set(key, id);
      expect([...table.load(id, back)]).toEqual([...v]);
    }
    if (offered.length === 0) return;
    cur = offered[choices[i] % offered.length];
  }
}

describe("the compact form of packed trains", () => {
  it.each([
    ["converging, plain", converging, PLAIN],
    ["converging, lazy arrival", converging, LAZY_ARRIVAL],
    ["converging, lazy length", converging, LAZY_LENGTH],
    ["facing, lazy length", facing, LAZY_LENGTH],
    ["facing, plain", facing, PLAIN],
  ] as const)("gives back every position a random walk meets (%s)", (_name, rulebook, level) => {
    fc.assert(
      fc.property(fc.array(fc.nat(), { minLength: 40, maxLength: 120 }), fc.array(fc.nat(0xffff), { minLength: 120, maxLength: 120 }), (choices, signals) =>
        walk(rulebook, level, choices, signals),
      ),
      { numRuns: 25 },
    );
  });

  it("refuses positions the environment cannot produce (axles two detectors apart)", () => {
    const model = compileModel(converging);
    const pack = packing(model);
    const codec = new TrainCodec(model, pack);
    const v = new Uint8Array(pack.width);
    v[0] = 1;
    v.set([2, 0, 0, 3, 1], 1); // two axles at 3 and 1
    expect(() => codec.encode(v, new Int32Array(codec.words), 0)).toThrow(/compact form/);
  });
});
