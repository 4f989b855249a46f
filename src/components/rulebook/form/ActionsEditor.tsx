import { useState, type ReactNode } from "react";
import { matchAction } from "@shared/rulebook/kinds";
import { ASPECTS, POINTS_POSITIONS, type Action, type Aspect, type PointsPosition } from "@shared/rulebook/schema";
import type { ValidationError } from "@shared/rulebook/validate";
import { actionKind, defaultAction, moveItem, removeItem, replaceItem, type ActionKind, type Declared } from "../../../lib/ruleEdit";
import { Button } from "../../ui/Button";
import { FieldErrors, NumberField, SelectField, TextField, errorsUnder, namesWith } from "./fields";

interface ActionsEditorProps {
  actions: readonly Action[];
  /** JSON path of the rule, e.g. `$.rules[3]`. */
  rulePath: string;
  /** Standing rules are not offered the alarm: it would repeat on every settle. */
  standing: boolean;
  declared: Declared;
  errors: readonly ValidationError[];
  onChange: (next: Action[]) => void;
}

const KIND_LABELS: Record<ActionKind, string> = {
  set: "set a latch",
  clear: "clear a latch",
  add: "add to a counter",
  zero: "zero a counter",
  select: "choose a selector value",
  show: "show an aspect on a signal",
  throw: "throw power-worked points",
  alarm: "raise an alarm",
};

function kindOptions(standing: boolean, current?: ActionKind) {
  return (Object.keys(KIND_LABELS) as ActionKind[])
    .filter((kind) => !standing || kind !== "alarm" || kind === current)
    .map((kind) => ({ value: kind, label: KIND_LABELS[kind] }));
}

function ActionFields({ action, declared, bad, onChange }: { action: Action; declared: Declared; bad: (field: string) => boolean; onChange: (next: Action) => void }) {
  return matchAction<ReactNode>(action, {
    set: (action) => <SelectField label="Latch" value={action.set} options={namesWith(action.set, declared.latches)} invalid={bad("set")} onChange={(set) => onChange({ set })} />,
    clear: (action) => <SelectField label="Latch" value={action.clear} options={namesWith(action.clear, declared.latches)} invalid={bad("clear")} onChange={(clear) => onChange({ clear })} />,
    add: (action) => (
      <>
        <SelectField label="Counter" value={action.add} options={namesWith(action.add, declared.counters)} invalid={bad("add")} onChange={(add) => onChange({ ...action, add })} />
        <NumberField label="By (negative takes away)" value={action.by} invalid={bad("by")} onChange={(by) => onChange({ ...action, by })} />
      </>
    ),
    zero: (action) => <SelectField label="Counter" value={action.zero} options={namesWith(action.zero, declared.counters)} invalid={bad("zero")} onChange={(zero) => onChange({ zero })} />,
    select: (action) => (
      <>
        <SelectField
          label="Selector"
          value={action.select}
          options={namesWith(action.select, declared.selectors.map((s) => s.name))}
          invalid={bad("select")}
          onChange={(select) => onChange({ select, value: declared.selectors.find((s) => s.name === select)?.values[0] ?? "" })}
        />
        <SelectField
          label="Value"
          value={action.value}
          options={namesWith(action.value, declared.selectors.find((s) => s.name === action.select)?.values ?? [], "not a value")}
          invalid={bad("value")}
          onChange={(value) => onChange({ ...action, value })}
        />
      </>
    ),
    show: (action) => (
      <>
        <SelectField
          label="Signal"
          value={action.show}
          options={namesWith(action.show, declared.signals.map((s) => s.id), "not a signal here")}
          invalid={bad("show")}
          onChange={(show) => onChange({ show, aspect: declared.signals.find((s) => s.id === show)?.aspects[0] ?? "danger" })}
        />
        <SelectField
          label="Aspect"
          value={action.aspect}
          options={namesWith(action.aspect, declared.signals.find((s) => s.id === action.show)?.aspects ?? ASPECTS, "cannot show")}
          invalid={bad("aspect")}
          onChange={(aspect) => onChange({ ...action, aspect: aspect as Aspect })}
        />
      </>
    ),
    throw: (action) => (
      <>
        <SelectField
          label="Points"
          value={action.throw}
          options={namesWith(action.throw, declared.points.filter((p) => p.worked === "power").map((p) => p.id), "not power-worked points here")}
          invalid={bad("throw")}
          onChange={(points) => onChange({ ...action, throw: points })}
        />
        <SelectField
          label="To"
          value={action.to}
          options={POINTS_POSITIONS.map((to) => ({ value: to, label: to }))}
          invalid={bad("to")}
          onChange={(to) => onChange({ ...action, to: to as PointsPosition })}
        />
      </>
    ),
    alarm: (action) => <TextField label="Alarm text" value={action.alarm} maxLength={200} invalid={bad("alarm")} onChange={(alarm) => onChange({ alarm })} className="min-w-64 flex-1" />,
  });
}

/** What a rule does, in order, each step chosen from the declared names. */
export function ActionsEditor({ actions, rulePath, standing, declared, errors, onChange }: ActionsEditorProps) {
  const [newKind, setNewKind] = useState<ActionKind>("set");
  const offered = kindOptions(standing);
  const kindToAdd = offered.some((o) => o.value === newKind) ? newKind : offered[0].value;

  return (
    <fieldset className="space-y-2">
      <legend className="text-xs font-semibold text-ink-soft">Actions (do, in this order)</legend>
      {actions.length === 0 ? <p className="text-sm text-ink-faint">No actions: the rule does nothing.</p> : null}
      <ol className="space-y-2">
        {actions.map((action, index) => {
          const here = `${rulePath}.do[${index}]`;
          const problems = errorsUnder(errors, here);
          const kind = actionKind(action);
          return (
            <li key={index} role="group" aria-label={`Action ${index + 1}`} className="space-y-1 rounded-md border border-panel-700 bg-panel-950 p-2">
              <div className="flex flex-wrap items-end gap-2">
                <span className="pb-1 text-xs text-ink-faint">{index + 1}.</span>
                {kind === null ? (
                  <p className="text-sm">The form cannot show this action; change it in the JSON tab.</p>
                ) : (
                  <>
                    <SelectField
                      label="Action"
                      value={kind}
                      options={kindOptions(standing, kind)}
                      onChange={(value) => onChange(replaceItem(actions, index, defaultAction(value as ActionKind, declared)))}
                    />
                    <ActionFields
                      action={action}
                      declared={declared}
                      bad={(field) => problems.some((e) => e.path === `${here}.${field}`)}
                      onChange={(next) => onChange(replaceItem(actions, index, next))}
                    />
                  </>
                )}
              </div>
              <FieldErrors errors={problems} />
              <div className="flex flex-wrap gap-2">
                <Button disabled={index === 0} onClick={() => onChange(moveItem(actions, index, index - 1))}>
                  Action up
                </Button>
                <Button disabled={index === actions.length - 1} onClick={() => onChange(moveItem(actions, index, index + 1))}>
                  Action down
                </Button>
                <Button onClick={() => onChange(removeItem(actions, index))}>Remove action</Button>
              </div>
            </li>
          );
        })}
      </ol>
      <div className="flex flex-wrap items-end gap-2">
        <SelectField label="New action" value={kindToAdd} options={offered} onChange={(value) => setNewKind(value as ActionKind)} />
        <Button onClick={() => onChange([...actions, defaultAction(kindToAdd, declared)])}>Add action</Button>
      </div>
    </fieldset>
  );
}
