/**
 * Cross-check of the prover against an independent model checker: SPIN 6.5.2 (Debian package
 * `spin`), run on the Promela translation of each rulebook (shared/rulebook/promela.ts, which
 * is written from the §4 semantics and does not call the engine). fast-check generates small
 * random two-route rulebooks; on every one, our verdicts on the four safety properties must
 * equal SPIN's. Rulebooks are checked in batches (one pan compilation per batch) to keep the
 * test fast. A disagreement prints the rulebook.
 */
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { toPromela, toPromelaBatch, SPIN_PROPERTIES, type SpinProperty } from "../../shared/rulebook/promela";
import { prove } from "../../shared/rulebook/prove";
import type { Rulebook } from "../../shared/rulebook/schema";
import { convergingJunction } from "../../shared/rulebook/templates";
import { convergingRulebookArb } from "../support/randomRulebooks";
import { runSpin, spinAvailable, type SpinRun } from "../support/spin";

const SPIN_SOURCE = "SPIN 6.5.2 (Debian package spin)";
const CASES = 36;
const BATCH = 9;
/** Rulebooks whose state space is bigger than this are left out (both tools would take long). */
const MAX_STATES = 30_000;

/** Small random two-route rulebooks (tests/support/randomRulebooks.ts), as in the reduced-vs-plain test. */
const rulebookArb = convergingRulebookArb({ maxAxles: 2, maxTrains: 2 });

function ourSafetyVerdict(rulebook: Rulebook): SpinProperty[] | null {
  const result = prove(rulebook, { maxStates: MAX_STATES });
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
      routes: [
        { id: "main", signal: "M1", approach: ["MA"], entry: "ME", exit: ["JX"] },
        { id: "branch", signal: "B1", approach: ["BA"], entry: "BE", exit: ["JX"] },
      ],
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

  it.skipIf(!haveSpin)(
    `${CASES} random rulebooks: the same safety verdicts as ${SPIN_SOURCE}`,
    async () => {
      const samples = fc.sample(rulebookArb, { numRuns: CASES * 2, seed: 20260502 });
      const cases: { rulebook: Rulebook; ours: SpinProperty[] }[] = [];
      for (const rulebook of samples) {
        if (cases.length === CASES) break;
        const ours = ourSafetyVerdict(rulebook);
        if (ours) cases.push({ rulebook, ours });
      }
      expect(cases.length).toBe(CASES);
      // Some must be refuted and some proved, or the comparison says little.
      expect(cases.some((c) => c.ours.length > 0)).toBe(true);
      expect(cases.some((c) => c.ours.length === 0)).toBe(true);

      const batches: (typeof cases)[] = [];
      for (let i = 0; i < cases.length; i += BATCH) batches.push(cases.slice(i, i + BATCH));
      // Two batches at a time: pan compilations dominate, and they use one core each.
      const reports: SpinRun[] = [];
      for (let i = 0; i < batches.length; i += 2) {
        reports.push(...(await Promise.all(batches.slice(i, i + 2).map((b) => runSpin(toPromelaBatch(b.map((c) => c.rulebook)))))));
      }
      const disagreements: string[] = [];
      batches.forEach((batch, bi) => {
        const report = reports[bi];
        expect(report.complete, report.output).toBe(true);
        batch.forEach((c, i) => {
          const spin = report.byModel.get(i) ?? [];
          if (JSON.stringify(spin) !== JSON.stringify(c.ours)) {
            disagreements.push(
              `ours ${JSON.stringify(c.ours)} vs ${SPIN_SOURCE} ${JSON.stringify(spin)} on\n${JSON.stringify(c.rulebook, null, 1)}`,
            );
          }
        });
      });
      expect(disagreements, disagreements.join("\n\n")).toEqual([]);
    },
    120_000,
  );
});
