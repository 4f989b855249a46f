/**
 * Cross-check of the prover against an independent model checker: SPIN 6.5.2 (Debian package
 * `spin`), run on the Promela translation of each rulebook (shared/rulebook/promela.ts, which
 * is written from the §4 semantics and does not call the engine). fast-check generates small
 * random two-route rulebooks; on every one, our verdicts on the four safety properties must
 * equal SPIN's. Rulebooks /2 with points: random rules over a facing group (two routes parting
 * at P1) and a route that needs P2, each points worked by power or by hand at random;
 * our verdicts on all six safety properties (with `points-set-for-train` and `points-locked`)
 * must equal SPIN's. Rulebooks are checked in batches (one pan compilation per batch) to keep the
 * test fast. A disagreement prints the rulebook. The Kestrel Bank and Wrenfold Loop templates
 * (power and hand points, up to the 8 axles × 3 trains the fake layout runs) are proved by both
 * with the same state count as the plain search; a run pan cannot finish must say so.
 */
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { toPromela, toPromelaBatch, SPIN_PROPERTIES, type PromelaOptions, type SpinProperty } from "@shared/rulebook/promela";
import { prove } from "@shared/rulebook/prove";
import { rulebookSchema, type Action, type Condition, type Rule, type Rulebook } from "@shared/rulebook/schema";
import { convergingJunction } from "@shared/rulebook/templates";
import { kestrelRoutes, wrenfoldFacing } from "../fixtures/junctions";
import { unthrownPointsRulebook } from "../fixtures/unthrownPoints";
import { convergingRulebookArb, COUNTERS, COUNT_CAP } from "../support/randomRulebooks";
import { runSpin, spinAvailable, type SpinRun } from "../support/spin";

const SPIN_SOURCE = "SPIN 6.5.2 (Debian package spin)";
const CASES = 36;
/** Fewer /2 cases: their models are bigger, so pan takes longer to compile. */
const POINTS_CASES = 20;
const BATCH = 9;
/** Rulebooks whose state space is bigger than this are left out (both tools would take long). */
const MAX_STATES = 30_000;

/** Small random two-route rulebooks (tests/support/randomRulebooks.ts), as in the reduced-vs-plain test. */
const rulebookArb = convergingRulebookArb({ maxAxles: 2, maxTrains: 2 });

type Working = Record<string, "power" | "hand">;

const POINTS = ["P1", "P2"] as const;
const pointsCondition: fc.Arbitrary<Condition> = fc.record({
  points: fc.constantFrom(...POINTS),
  lies: fc.constantFrom("normal" as const, "reverse" as const, "moving" as const, "unknown" as const),
});
const condition2: fc.Arbitrary<Condition> = fc.letrec<{ c: Condition }>((tie) => ({
  c: fc.oneof(
    { depthSize: "small", withCrossShrink: true },
    pointsCondition,
    fc.constant<Condition>({ latch: "x" }),
    fc.record({ count: fc.constantFrom(...COUNTERS), op: fc.constantFrom("==", "!=", ">", "<="), value: fc.integer({ min: 0, max: 2 }) }) as fc.Arbitrary<Condition>,
    fc.record({ aspect: fc.constantFrom("W1", "U1"), is: fc.constantFrom("danger" as const, "clear" as const) }),
    fc.record({ not: tie("c") }),
    fc.record({ all: fc.array(tie("c"), { minLength: 1, maxLength: 2 }) }),
    fc.record({ any: fc.array(tie("c"), { minLength: 1, maxLength: 2 }) }),
  ),
})).c;
const action2: fc.Arbitrary<Action> = fc.oneof(
  fc.constant<Action>({ set: "x" }),
  fc.constant<Action>({ clear: "x" }),
  fc.record({ add: fc.constantFrom(...COUNTERS), by: fc.constantFrom(1, -1) }),
  fc.record({ zero: fc.constantFrom(...COUNTERS) }),
  fc.record({ show: fc.constantFrom("W1", "U1"), aspect: fc.constantFrom("danger" as const, "clear" as const) }),
  fc.record({ throw: fc.constantFrom(...POINTS), to: fc.constantFrom("normal" as const, "reverse" as const) }),
);
const trigger2 = fc.oneof(
  fc.constantFrom("WA", "WE", "TX", "LX", "UA", "UE", "UX").map((pass) => ({ pass })),
  fc.constantFrom(...POINTS).map((moved) => ({ moved })),
  fc.constant({ quiet: "WE", ms: 2000 }),
  fc.constant("standing" as const),
);

/** A /2 rulebook with points and how its points are worked (throws only of power points, as validation asks). */
const pointsRulebookArb: fc.Arbitrary<{ rulebook: Rulebook; working: Working }> = fc
  .record({
    rules: fc.array(fc.record({ on: trigger2, if: fc.option(condition2, { nil: undefined }), do: fc.array(action2, { minLength: 1, maxLength: 3 }) }), {
      minLength: 2,
      maxLength: 6,
    }),
    working: fc.record({ P1: fc.constantFrom("power" as const, "hand" as const), P2: fc.constantFrom("power" as const, "hand" as const) }),
    maxAxles: fc.integer({ min: 1, max: 2 }),
    maxTrainsPerRoute: fc.integer({ min: 1, max: 2 }),
  })
  .map(({ rules, working, maxAxles, maxTrainsPerRoute }) => {
    const built: Rule[] = rules.map((r, i) => {
      const acts = r.do.filter((a) => !("throw" in a) || working[a.throw as "P1" | "P2"] === "power");
      const capped = acts
        .filter((a): a is { add: string; by: number } => "add" in a && a.by > 0)
        .map((a): Condition => ({ count: a.add, op: "<", value: COUNT_CAP }));
      const conditions = [...(r.if ? [r.if] : []), ...capped];
      const ifPart = conditions.length === 0 ? undefined : conditions.length === 1 ? conditions[0] : { all: conditions };
      return { id: `r${i}`, on: r.on, ...(ifPart ? { if: ifPart } : {}), do: acts.length ? acts : [{ set: "x" }] };
    });
    built.push(
      // Sound-ish: a signal clears only while its points lie still, and goes back to danger when they move.
      { id: "open-wrenfold", on: { pass: "WA" }, if: { not: { points: "P1", lies: "moving" } }, do: [{ show: "W1", aspect: "clear" }] },
      { id: "close-wrenfold", on: { pass: "WE" }, do: [{ show: "W1", aspect: "danger" }] },
      { id: "wrenfold-points-move", on: { moved: "P1" }, do: [{ show: "W1", aspect: "danger" }] },
      { id: "open-up", on: { pass: "UA" }, if: { points: "P2", lies: "normal" }, do: [{ show: "U1", aspect: "clear" }] },
      { id: "up-points-move", on: { moved: "P2" }, do: [{ show: "U1", aspect: "danger" }] },
      { id: "close-up", on: { pass: "UE" }, do: [{ show: "U1", aspect: "danger" }] },
    );
    const rulebook = rulebookSchema.parse({
      format: "blocklight.rulebook/2",
      latches: { x: false },
      counters: { a: 0, b: 0 },
      selectors: {},
      initial: { W1: "danger", U1: "danger" },
      rules: built,
      proving: {
        routes: [
          { id: "through", signal: "W1", approach: ["WA"], entry: "WE", points: { P1: "normal" }, exit: ["TX"] },
          { id: "loop", signal: "W1", approach: ["WA"], entry: "WE", points: { P1: "reverse" }, exit: ["LX"] },
          { id: "up", signal: "U1", approach: ["UA"], entry: "UE", points: { P2: "normal" }, exit: ["UX"] },
        ],
        conflicts: [],
        maxAxles,
        maxTrainsPerRoute,
      },
    });
    return { rulebook, working };
  });

function ourSafetyVerdict(rulebook: Rulebook, points?: Working): SpinProperty[] | null {
  const result = prove(rulebook, { maxStates: MAX_STATES, points });
  const safety = result.properties.filter((p) => (SPIN_PROPERTIES as readonly string[]).includes(p.id));
  if (safety.some((p) => p.holds === null)) return null;
  return SPIN_PROPERTIES.filter((id) => safety.find((p) => p.id === id)?.holds === false);
}

describe(`prover verdicts agree with ${SPIN_SOURCE}`, async () => {
  const haveSpin = await spinAvailable();
  if (!haveSpin && process.env.CI) {
    it("needs SPIN", () => {
      throw new Error(`${SPIN_SOURCE} is not on PATH: install it with "apt-get install -y spin" (CI must have it)`);
    });
    return;
  }

  it.skipIf(!haveSpin)(`Kestrel Bank template: proved by us and by ${SPIN_SOURCE}, with the same state count`, async () => {
    const rulebook = convergingJunction({
      routes: kestrelRoutes(),
      order: "priority",
      priority: "main",
      maxAxles: 2,
      maxTrainsPerRoute: 2,
    });
    // SPIN explores the plain §5 environment, so the state counts are compared with the plain search.
    const ours = prove(rulebook, { plain: true });
    const spin = await runSpin(toPromela(rulebook));
    expect(ours.verdict).toBe("proved");
    expect(spin.complete).toBe(true);
    expect(spin.errors).toBe(0); // SPIN 6.5.2 (Debian package spin)
    // pan also stores the state before init's first atomic step (nothing settled yet): one more.
    expect(spin.states).toBe(ours.stats.states + 1); // SPIN 6.5.2 (Debian package spin)
  });

  it.skipIf(!haveSpin)(`a model too big for pan's memory or time is reported incomplete by ${SPIN_SOURCE}, never as a proof`, async () => {
    // Kestrel Bank at 4 axles × 3 trains: about 3.8 M plain states, far more than 64 MB or 0.5 s hold.
    const rulebook = convergingJunction({
      routes: kestrelRoutes(),
      order: "priority",
      priority: "main",
      maxAxles: 4,
      maxTrainsPerRoute: 3,
    });
    const model = toPromela(rulebook);
    const [memory, time] = await Promise.all([runSpin(model, { memoryMb: 64 }), runSpin(model, { timeoutMs: 500 })]);
    expect([memory.complete, memory.stoppedBy]).toEqual([false, "memory"]); // SPIN 6.5.2 (Debian package spin)
    expect([time.complete, time.stoppedBy]).toEqual([false, "time"]); // SPIN 6.5.2 (Debian package spin)
    for (const run of [memory, time]) expect(run.states).toBeGreaterThan(0);
  });

  // 8 × 3 is the size the demo's fake layout runs and the bench measures.
  it.skipIf(!haveSpin).each([
    ["power", 2, 2],
    ["hand", 2, 2],
    ["power", 8, 3],
    ["hand", 8, 3],
  ] as const)(`Wrenfold Loop facing template, %s points, %i axles × %i trains: proved by us and by ${SPIN_SOURCE}, with the same state count`, async (worked, maxAxles, maxTrainsPerRoute) => {
    const rulebook = wrenfoldFacing(worked, { maxAxles, maxTrainsPerRoute });
    const points = { P2: worked };
    // SPIN explores the plain §5 environment, so the state counts are compared with the plain search.
    const ours = prove(rulebook, { points, plain: true });
    const spin = await runSpin(toPromela(rulebook, { points }), { states: ours.stats.states });
    expect(ours.verdict).toBe("proved");
    expect(spin.complete).toBe(true);
    expect(spin.errors).toBe(0); // SPIN 6.5.2 (Debian package spin)
    expect(spin.states).toBe(ours.stats.states + 1); // SPIN 6.5.2 (Debian package spin)
  }, 120_000);

  it.skipIf(!haveSpin)(`a hand-worked P2 under a rulebook that never throws it: misrouted for us and for ${SPIN_SOURCE}`, async () => {
    const rulebook = rulebookSchema.parse(unthrownPointsRulebook());
    for (const worked of ["power", "hand"] as const) {
      const points = { P2: worked };
      const spin = await runSpin(toPromela(rulebook, { points }));
      expect(spin.complete).toBe(true);
      expect(spin.violated).toEqual(ourSafetyVerdict(rulebook, points));
      expect(spin.violated).toEqual(worked === "hand" ? ["points-set-for-train"] : []); // SPIN 6.5.2 (Debian package spin)
    }
  });

  it.skipIf(!haveSpin)(
    `${CASES} random rulebooks: the same safety verdicts as ${SPIN_SOURCE}`,
    async () => {
      const samples = fc.sample(rulebookArb, { numRuns: CASES * 2, seed: 20260502 });
      await expectAgreement(
        samples.map((rulebook) => ({ rulebook, working: undefined })),
        CASES,
      );
    },
    120_000,
  );

  it.skipIf(!haveSpin)(
    `${POINTS_CASES} random /2 rulebooks with points, facing groups, power and hand points: the same safety verdicts as ${SPIN_SOURCE}`,
    async () => {
      const samples = fc.sample(pointsRulebookArb, { numRuns: CASES * 3, seed: 20260513 });
      const cases = await expectAgreement(samples, POINTS_CASES);
      // Both kinds of points and both points properties must be exercised, or the comparison says little.
      for (const id of ["points-set-for-train", "points-locked"] as const) expect(cases.some((c) => c.ours.includes(id)), id).toBe(true);
      expect(cases.some((c) => c.working!.P1 === "power" && c.ours.length === 0)).toBe(true);
      expect(cases.some((c) => c.working!.P1 === "hand" && c.ours.length === 0)).toBe(true);
    },
    240_000,
  );
});

/** Our verdicts on the first `count` samples we decide must equal SPIN's; returns the cases compared. */
async function expectAgreement(samples: { rulebook: Rulebook; working: Working | undefined }[], count: number) {
  const cases: { rulebook: Rulebook; working: Working | undefined; ours: SpinProperty[] }[] = [];
  for (const { rulebook, working } of samples) {
    if (cases.length === count) break;
    const ours = ourSafetyVerdict(rulebook, working);
    if (ours) cases.push({ rulebook, working, ours });
  }
  expect(cases.length).toBe(count);
  // Some must be refuted and some proved, or the comparison says little.
  expect(cases.some((c) => c.ours.length > 0)).toBe(true);
  expect(cases.some((c) => c.ours.length === 0)).toBe(true);

  const batches: (typeof cases)[] = [];
  for (let i = 0; i < cases.length; i += BATCH) batches.push(cases.slice(i, i + BATCH));
  // Two batches at a time: pan compilations dominate, and they use one core each.
  const reports: SpinRun[] = [];
  for (let i = 0; i < batches.length; i += 2) {
    reports.push(
      ...(await Promise.all(
        batches.slice(i, i + 2).map((b) => runSpin(toPromelaBatch(b.map((c) => c.rulebook), b.map((c): PromelaOptions => ({ points: c.working }))))),
      )),
    );
  }
  const disagreements: string[] = [];
  batches.forEach((batch, bi) => {
    const report = reports[bi];
    expect(report.complete, report.output).toBe(true);
    batch.forEach((c, i) => {
      const spin = report.byModel.get(i) ?? [];
      if (JSON.stringify(spin) !== JSON.stringify(c.ours)) {
        disagreements.push(
          `ours ${JSON.stringify(c.ours)} vs ${SPIN_SOURCE} ${JSON.stringify(spin)} on ${JSON.stringify(c.working ?? {})}\n${JSON.stringify(c.rulebook, null, 1)}`,
        );
      }
    });
  });
  expect(disagreements, disagreements.join("\n\n")).toEqual([]);
  return cases;
}
