// @vitest-environment happy-dom
import { cleanup, fireEvent, render, screen, within } from "@testing-library/react";
import { useState } from "react";
import { afterEach, describe, expect, it, vi } from "vitest";
import { kestrelTwoRoutesLayout } from "../fixtures/kestrelTwoRoutes";
import type { Condition, Rulebook } from "@shared/rulebook/schema";
import type { RulebookContext } from "@shared/rulebook/validate";
import { RuleFormEditor } from "../../src/components/rulebook/form/RuleFormEditor";
import {
  addCondition,
  conditionAt,
  removeCondition,
  replaceCondition,
  setGroupKind,
  unwrapNot,
  wrapCondition,
  type ConditionPath,
} from "../../src/lib/ruleEdit";

afterEach(cleanup);

const layout = kestrelTwoRoutesLayout();
const context: RulebookContext = {
  detectors: layout.detectors.map((d) => d.id),
  signals: layout.signals.map((s) => ({ id: s.id, aspects: s.aspects })),
};
const draft = (): Rulebook => structuredClone(layout.rulebook);

/** The form as the rulebook page holds it: the draft lives above, every edit replaces it. */
function renderForm(initial: Rulebook = draft()) {
  const onChange = vi.fn<(next: Rulebook) => void>();
  function Holder() {
    const [value, setValue] = useState(initial);
    return (
      <RuleFormEditor
        value={value}
        context={context}
        onChange={(next) => {
          onChange(next);
          setValue(next);
        }}
      />
    );
  }
  render(<Holder />);
  const latest = () => onChange.mock.lastCall![0];
  return { onChange, latest };
}

const choose = (scope: HTMLElement, label: string, value: string) => fireEvent.change(within(scope).getByLabelText(label), { target: { value } });
const optionsOf = (select: HTMLElement) => within(select).getAllByRole("option").map((o) => o.textContent);

describe("RuleFormEditor", () => {
  it("edits a rule's trigger, adds a condition and an action, and hands the whole draft up", () => {
    const { latest } = renderForm();
    fireEvent.click(screen.getByRole("button", { name: "Edit main-approach" }));
    const editor = screen.getByRole("group", { name: "Rule main-approach" });

    choose(editor, "Runs", "quiet");
    expect(latest().rules[0].on).toEqual({ quiet: "MA", ms: 5000 });
    fireEvent.change(within(editor).getByLabelText("Quiet for (ms)"), { target: { value: "8000" } });
    choose(editor, "Detector", "ME");

    choose(editor, "New condition", "selector");
    fireEvent.click(within(editor).getByRole("button", { name: "Add condition" }));
    choose(within(editor).getByRole("group", { name: "Condition" }), "Value", "main");

    choose(editor, "New action", "show");
    fireEvent.click(within(editor).getByRole("button", { name: "Add action" }));
    const action = within(editor).getByRole("group", { name: "Action 2" });
    // Only the aspects M1 can show are offered.
    expect(optionsOf(within(action).getByLabelText("Aspect"))).toEqual(["danger", "clear"]);
    choose(action, "Aspect", "clear");

    const next = latest();
    expect(next.rules[0]).toEqual({
      id: "main-approach",
      note: layout.rulebook.rules[0].note,
      on: { quiet: "ME", ms: 8000 },
      if: { selector: "route", is: "main" },
      do: [
        { add: "mainApproach", by: 1 },
        { show: "M1", aspect: "clear" },
      ],
    });
    // The key order stays the usual one, so the JSON tab reads naturally.
    expect(Object.keys(next.rules[0])).toEqual(["id", "note", "on", "if", "do"]);
    expect(next.rules.slice(1)).toEqual(layout.rulebook.rules.slice(1));
    expect(next.counters).toEqual(layout.rulebook.counters);
  });

  it("shows the error beside the rule that uses a counter once the counter is removed", () => {
    const { latest } = renderForm();
    expect(within(screen.getByTestId("rule-row-3")).queryByText(/undeclared counter/)).toBeNull();

    fireEvent.click(screen.getByRole("button", { name: "Remove counter branchApproach" }));

    expect(latest().counters).toEqual({ junction: 0, mainApproach: 0 });
    const row = within(screen.getByTestId("rule-row-3"));
    expect(row.getByText('undeclared counter "branchApproach"')).toBeTruthy();
    expect(row.getByText("$.rules[3].do[0].add")).toBeTruthy();
    // Rules that do not use it stay clean.
    expect(within(screen.getByTestId("rule-row-0")).queryByText(/undeclared/)).toBeNull();
  });

  it("does not offer the alarm to a standing rule, but does to a pass rule", () => {
    renderForm();
    fireEvent.click(screen.getByRole("button", { name: "Edit give-main" }));
    const standing = screen.getByRole("group", { name: "Rule give-main" });
    expect(optionsOf(within(standing).getByLabelText("New action"))).not.toContain("raise an alarm");
    for (const select of within(standing).getAllByLabelText("Action")) expect(optionsOf(select)).not.toContain("raise an alarm");

    fireEvent.click(screen.getByRole("button", { name: "Close give-main" }));
    fireEvent.click(screen.getByRole("button", { name: "Edit main-approach" }));
    const passing = screen.getByRole("group", { name: "Rule main-approach" });
    expect(optionsOf(within(passing).getByLabelText("New action"))).toContain("raise an alarm");
  });

  it("moves, duplicates and deletes rules", () => {
    const { latest } = renderForm();
    fireEvent.click(screen.getByRole("button", { name: "Down main-approach" }));
    expect(latest().rules.slice(0, 2).map((r) => r.id)).toEqual(["main-enters", "main-approach"]);
    fireEvent.click(screen.getByRole("button", { name: "Duplicate main-approach" }));
    expect(latest().rules.slice(0, 3).map((r) => r.id)).toEqual(["main-enters", "main-approach", "main-approach-copy"]);
    fireEvent.click(screen.getByRole("button", { name: "Delete main-enters" }));
    expect(latest().rules.map((r) => r.id)).toEqual(["main-approach", "main-approach-copy", ...layout.rulebook.rules.slice(2).map((r) => r.id)]);
  });
});

describe("condition tree edits", () => {
  const latch = (name: string): Condition => ({ latch: name });
  const tree: Condition = { all: [latch("a"), { not: latch("b") }, { any: [latch("c"), latch("d")] }] };

  it.each<[string, Condition | undefined, (root: Condition | undefined) => Condition | undefined, Condition | undefined]>([
    ["add to no condition", undefined, (r) => addCondition(r, [], latch("a")), latch("a")],
    ["add beside a single test makes an all-group", latch("a"), (r) => addCondition(r, [], latch("b")), { all: [latch("a"), latch("b")] }],
    ["add into a nested any-group", tree, (r) => addCondition(r, ["all", 2], latch("e")), { all: [latch("a"), { not: latch("b") }, { any: [latch("c"), latch("d"), latch("e")] }] }],
    ["replace deep inside", tree, (r) => replaceCondition(r, ["all", 1, "not"], latch("z")), { all: [latch("a"), { not: latch("z") }, { any: [latch("c"), latch("d")] }] }],
    ["remove a member of a group", tree, (r) => removeCondition(r, ["all", 2, "any", 0]), { all: [latch("a"), { not: latch("b") }, { any: [latch("d")] }] }],
    ["remove inside a not removes the not", tree, (r) => removeCondition(r, ["all", 1, "not"]), { all: [latch("a"), { any: [latch("c"), latch("d")] }] }],
    ["remove the root leaves no condition", tree, (r) => removeCondition(r, []), undefined],
    ["wrap in not", tree, (r) => wrapCondition(r, ["all", 0], "not"), { all: [{ not: latch("a") }, { not: latch("b") }, { any: [latch("c"), latch("d")] }] }],
    ["wrap in a group", latch("a"), (r) => wrapCondition(r, [], "any"), { any: [latch("a")] }],
    ["drop a not", tree, (r) => unwrapNot(r, ["all", 1]), { all: [latch("a"), latch("b"), { any: [latch("c"), latch("d")] }] }],
    ["all becomes any", tree, (r) => setGroupKind(r, [], "any"), { any: [latch("a"), { not: latch("b") }, { any: [latch("c"), latch("d")] }] }],
    ["group kind of a leaf is left alone", latch("a"), (r) => setGroupKind(r, [], "all"), latch("a")],
  ])("%s", (_name, before, edit, after) => {
    const snapshot = structuredClone(before);
    expect(edit(before)).toEqual(after);
    expect(before).toEqual(snapshot);
  });

  it.each<[ConditionPath, Condition | undefined]>([
    [[], tree],
    [["all", 1, "not"], latch("b")],
    [["all", 2, "any", 1], latch("d")],
    [["all", 5], undefined],
  ])("finds the condition at %j", (path, expected) => {
    expect(conditionAt(tree, path)).toEqual(expected);
  });
});
