import { describe, expect, it } from "vitest";
import type { ChangeDto, LiveState, LiveUpdate } from "@shared/contract/live";
import { redactStateForDisplay, redactUpdateForDisplay } from "../../server/features/display/redact";

const alarm = { id: 1, kind: "stuck" as const, subject: "junction", message: "m", raisedAt: "t", acknowledgedAt: "t", acknowledgedBy: "Fernmoor Signaller", comment: "checked", clearedAt: null, occurrences: 1, lastSeenAt: "t" };

describe("what a visitor display receives", () => {
  it("gets no alarms (they name who acknowledged them)", () => {
    const state = { slug: "kestrel-bank", version: 3, alarms: [alarm], shown: { M1: "clear" } } as unknown as LiveState;
    expect(redactStateForDisplay(state)).toMatchObject({ version: 3, alarms: [], shown: { M1: "clear" } });
  });

  it.each<[string, ChangeDto, ChangeDto]>([
    ["a command's reason is dropped", { kind: "held", name: "M1", from: false, to: true, command: "hold", detail: "Shunt for Fernmoor Signaller" }, { kind: "held", name: "M1", from: false, to: true, command: "hold" }],
    ["a rule's change is kept whole", { kind: "shown", name: "M1", from: "danger", to: "clear", rule: "give-main" }, { kind: "shown", name: "M1", from: "danger", to: "clear", rule: "give-main" }],
  ])("%s", (_name, change, expected) => {
    const update: LiveUpdate = {
      slug: "kestrel-bank",
      from: 4,
      version: 5,
      steps: [
        { version: 4, event: null, changes: [change] },
        { version: 5, event: null, changes: [change] },
      ],
      patch: { alarms: [alarm], shown: { M1: "danger" } },
    };
    const out = redactUpdateForDisplay(update);
    expect(out.steps.map((s) => s.changes)).toEqual([[expected], [expected]]);
    expect(out.steps.map((s) => s.version)).toEqual([4, 5]);
    expect(out.patch).toEqual({ shown: { M1: "danger" } });
  });
});
