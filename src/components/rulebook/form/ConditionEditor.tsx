import { useState } from "react";
import { ASPECTS, COMPARISONS, POINTS_CONDITION_LIES, type Aspect, type Comparison, type Condition, type PointsConditionLie } from "@shared/rulebook/schema";
import { toJsonPath, type ValidationError } from "@shared/rulebook/validate";
import {
  addCondition,
  defaultLeaf,
  removeCondition,
  replaceCondition,
  setGroupKind,
  unwrapNot,
  wrapCondition,
  type ConditionPath,
  type Declared,
  type LeafKind,
} from "../../../lib/ruleEdit";
import { Button } from "../../ui/Button";
import { FieldErrors, NumberField, SelectField, errorsUnder, namesWith } from "./fields";

interface ConditionEditorProps {
  condition: Condition | undefined;
  /** JSON path of the rule, e.g. `$.rules[3]`. */
  rulePath: string;
  declared: Declared;
  errors: readonly ValidationError[];
  onChange: (next: Condition | undefined) => void;
}

const LEAF_LABELS: Record<LeafKind, string> = {
  latch: "a latch is set",
  count: "a counter compares",
  selector: "a selector is",
  aspect: "a signal is asked for",
  points: "points lie",
};
const LEAF_KINDS = (Object.keys(LEAF_LABELS) as LeafKind[]).map((value) => ({ value, label: LEAF_LABELS[value] }));

const NEW_KINDS = [...LEAF_KINDS, { value: "all", label: "all of a group" }, { value: "any", label: "any of a group" }] as const;
type NewKind = (typeof NEW_KINDS)[number]["value"];

const COMPARISON_LABELS: Record<Comparison, string> = {
  "==": "is",
  "!=": "is not",
  ">": "is more than",
  ">=": "is at least",
  "<": "is less than",
  "<=": "is at most",
};

function leafKindOf(condition: Condition): LeafKind | null {
  return LEAF_KINDS.find((kind) => kind.value in condition)?.value ?? null;
}

/** What every node of the tree needs: the whole condition (edits are made from the root) and where it sits. */
type TreeContext = ConditionEditorProps;

function AddConditionControl({ ctx, path, label }: { ctx: TreeContext; path: ConditionPath; label: string }) {
const { condition, declared, onChange } = ctx;
  const [kind, setKind] = useState<NewKind>("latch");
  return (
    <div className="flex flex-wrap items-end gap-2">
      <SelectField label="New condition" value={kind} options={NEW_KINDS} onChange={(value) => setKind(value as NewKind)} />
      <Button
        onClick={() => {
          const child: Condition = kind === "all" ? { all: [] } : kind === "any" ? { any: [] } : defaultLeaf(kind, declared);
          onChange(addCondition(condition, path, child));
        }}
      >
        {label}
      </Button>
    </div>
  );
}

function ConditionNode({ ctx, node, path }: { ctx: TreeContext; node: Condition; path: ConditionPath }) {
const { condition, declared, errors, onChange } = ctx;
  const here = toJsonPath(["if", ...path], ctx.rulePath);
  const replace = (next: Condition) => onChange(replaceCondition(condition, path, next));
  const tools = (
    <div className="flex flex-wrap gap-2">
      <Button onClick={() => onChange(wrapCondition(condition, path, "not"))}>Turn into not</Button>
      <Button onClick={() => onChange(removeCondition(condition, path))}>Remove condition</Button>
    </div>
  );

  if (node !== null && typeof node === "object" && ("all" in node || "any" in node) && Array.isArray("all" in node ? node.all : node.any)) {
    const kind = "all" in node ? "all" : "any";
    const members = "all" in node ? node.all : node.any;
    return (
      <div role="group" aria-label={`${kind === "all" ? "All" : "Any"} of these`} className="space-y-2 rounded-md border border-panel-700 p-2">
        <div className="flex flex-wrap items-end justify-between gap-2">
          <SelectField
            label="Holds when"
            value={kind}
            options={[
              { value: "all", label: "all of these hold" },
              { value: "any", label: "any of these holds" },
            ]}
            onChange={(value) => onChange(setGroupKind(condition, path, value as "all" | "any"))}
          />
          {tools}
        </div>
        <FieldErrors errors={errors.filter((e) => e.path === here)} />
        {members.length === 0 ? <p className="text-xs text-ink-faint">{kind === "all" ? "Empty: always holds." : "Empty: never holds."}</p> : null}
        <ul className="space-y-2 border-l-2 border-panel-600 pl-3">
          {members.map((member, index) => (
            <li key={index}>
              <ConditionNode ctx={ctx} node={member} path={[...path, kind, index]} />
            </li>
          ))}
        </ul>
        <AddConditionControl ctx={ctx} path={path} label="Add to group" />
      </div>
    );
  }

  if (node !== null && typeof node === "object" && "not" in node) {
    return (
      <div role="group" aria-label="Not" className="space-y-2 rounded-md border border-panel-700 p-2">
        <div className="flex flex-wrap items-center justify-between gap-2">
          <span className="text-xs font-semibold text-ink-soft">It is not the case that:</span>
          <div className="flex flex-wrap gap-2">
            <Button onClick={() => onChange(unwrapNot(condition, path))}>Drop the not</Button>
            <Button onClick={() => onChange(removeCondition(condition, path))}>Remove condition</Button>
          </div>
        </div>
        <ConditionNode ctx={ctx} node={node.not} path={[...path, "not"]} />
      </div>
    );
  }

  const kind = node !== null && typeof node === "object" ? leafKindOf(node) : null;
  const problems = errorsUnder(errors, here);
  if (kind === null) {
    return (
      <div className="space-y-1 rounded-md border border-panel-700 p-2 text-sm">
        <p>The form cannot show this condition; change it in the JSON tab.</p>
        <FieldErrors errors={problems} />
        {tools}
      </div>
    );
  }
  const bad = (field: string) => problems.some((e) => e.path === `${here}.${field}`);
  return (
    <div role="group" aria-label="Condition" className="space-y-1 rounded-md border border-panel-700 bg-panel-950 p-2">
      <div className="flex flex-wrap items-end gap-2">
        <SelectField
          label="Holds when"
          value={kind}
          options={LEAF_KINDS}
          onChange={(value) => replace(defaultLeaf(value as LeafKind, declared))}
        />
        {"latch" in node ? (
          <SelectField label="Latch" value={node.latch} options={namesWith(node.latch, declared.latches)} invalid={bad("latch")} onChange={(latch) => replace({ latch })} />
        ) : null}
        {"count" in node ? (
          <>
            <SelectField label="Counter" value={node.count} options={namesWith(node.count, declared.counters)} invalid={bad("count")} onChange={(count) => replace({ ...node, count })} />
            <SelectField
              label="Comparison"
              value={node.op}
              options={COMPARISONS.map((op) => ({ value: op, label: COMPARISON_LABELS[op] }))}
              onChange={(op) => replace({ ...node, op: op as Comparison })}
            />
            <NumberField label="Value" value={node.value} invalid={bad("value")} onChange={(value) => replace({ ...node, value })} />
          </>
        ) : null}
        {"selector" in node ? (
          <>
            <SelectField
              label="Selector"
              value={node.selector}
              options={namesWith(node.selector, declared.selectors.map((s) => s.name))}
              invalid={bad("selector")}
              onChange={(selector) => replace({ selector, is: declared.selectors.find((s) => s.name === selector)?.values[0] ?? "" })}
            />
            <SelectField
              label="Value"
              value={node.is}
              options={namesWith(node.is, declared.selectors.find((s) => s.name === node.selector)?.values ?? [], "not a value")}
              invalid={bad("is")}
              onChange={(is) => replace({ ...node, is })}
            />
          </>
        ) : null}
        {"points" in node ? (
          <>
            <SelectField
              label="Points"
              value={node.points}
              options={namesWith(node.points, declared.points.map((p) => p.id), "not points here")}
              invalid={bad("points")}
              onChange={(points) => replace({ ...node, points })}
            />
            <SelectField
              label="Lie"
              value={node.lies}
              options={POINTS_CONDITION_LIES.map((lies) => ({ value: lies, label: lies === "unknown" ? "not yet reported" : lies }))}
              invalid={bad("lies")}
              onChange={(lies) => replace({ ...node, lies: lies as PointsConditionLie })}
            />
          </>
        ) : null}
        {"aspect" in node ? (
          <>
            <SelectField
              label="Signal"
              value={node.aspect}
              options={namesWith(node.aspect, declared.signals.map((s) => s.id), "not a signal here")}
              invalid={bad("aspect")}
              onChange={(aspect) => replace({ aspect, is: declared.signals.find((s) => s.id === aspect)?.aspects[0] ?? "danger" })}
            />
            <SelectField
              label="Asked for"
              value={node.is}
              options={namesWith(node.is, declared.signals.find((s) => s.id === node.aspect)?.aspects ?? ASPECTS, "cannot show")}
              invalid={bad("is")}
              onChange={(is) => replace({ ...node, is: is as Aspect })}
            />
          </>
        ) : null}
      </div>
      <FieldErrors errors={problems} />
      {tools}
    </div>
  );
}

/** The "if" of a rule as a tree of groups (all / any), nots and single tests. */
export function ConditionEditor({ condition, rulePath, declared, errors, onChange }: ConditionEditorProps) {
  const ctx: TreeContext = { condition, rulePath, declared, errors, onChange };
  return (
    <fieldset className="space-y-2">
      <legend className="text-xs font-semibold text-ink-soft">Condition (if)</legend>
      {condition === undefined ? (
        <>
          <p className="text-sm text-ink-faint">No condition: the rule applies every time it is triggered.</p>
          <AddConditionControl ctx={ctx} path={[]} label="Add condition" />
        </>
      ) : (
        <ConditionNode ctx={ctx} node={condition} path={[]} />
      )}
      {condition !== undefined && !("all" in condition) && !("any" in condition) ? <AddConditionControl ctx={ctx} path={[]} label="Add condition" /> : null}
    </fieldset>
  );
}
