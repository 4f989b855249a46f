import { Fragment, useMemo, useState } from "react";
import { describeRule } from "@shared/rulebook/describe";
import type { Rule, Rulebook } from "@shared/rulebook/schema";
import { validateRulebookFile, type RulebookContext, type ValidationError } from "@shared/rulebook/validate";
import { duplicateRule, moveItem, removeItem, replaceItem, uniqueName, type Declared } from "../../../lib/ruleEdit";
import { Button } from "../../ui/Button";
import { ErrorList } from "../../ui/ErrorList";
import { DeclarationTables } from "./DeclarationTables";
import { FieldErrors, errorsUnder } from "./fields";
import { ProvingEditor } from "./ProvingEditor";
import { RuleEditor } from "./RuleEditor";

interface RuleFormEditorProps {
  /** The draft rulebook (see `asFormRulebook`): the same object the JSON tab shows. */
  value: Rulebook;
  context: RulebookContext;
  onChange: (next: Rulebook) => void;
  /** Train length (axles) for a new proving section; from the placement page's longest train. */
  defaultAxles?: number;
}

function triggerSummary(trigger: unknown): string {
  if (trigger === "standing") return "standing";
  if (trigger !== null && typeof trigger === "object") {
    if ("pass" in trigger) return `pass ${String(trigger.pass)}`;
    if ("moved" in trigger) return `${String(trigger.moved)} moved`;
    if ("quiet" in trigger && "ms" in trigger) return `${String(trigger.quiet)} quiet ${String(trigger.ms)} ms`;
  }
  return "(see JSON)";
}

function sentence(rule: Rule): string {
  try {
    return describeRule({ on: rule.on, if: rule.if, do: Array.isArray(rule.do) ? rule.do : [] });
  } catch {
    // A half-typed rule from the JSON tab can have shapes the sentence writer does not know.
    return "(cannot be read out until its errors are fixed)";
  }
}

const RULE_FIELDS = ["id", "note", "on", "if", "do"];
const PLACED = /^\$\.(rules\[\d+\]|(latches|counters|selectors|initial)[.[]|proving)/;

/** The declared names the selects offer. */
function declaredOf(rulebook: Rulebook, context: RulebookContext): Declared {
  return {
    latches: Object.keys(rulebook.latches),
    counters: Object.keys(rulebook.counters),
    selectors: Object.entries(rulebook.selectors).map(([name, s]) => ({ name, values: Array.isArray(s?.values) ? s.values : [] })),
    signals: context.signals,
    detectors: context.detectors,
    points: context.points ?? [],
  };
}

/**
 * The rulebook draft as tables and forms: declarations, then the rules in engine order, each
 * openable into its own editor. Selects offer only declared names; the whole draft is still
 * validated after every edit and each problem is shown beside the rule or field it is about.
 */
export function RuleFormEditor({ value, context, onChange, defaultAxles = 2 }: RuleFormEditorProps) {
  const [open, setOpen] = useState<number | null>(null);
  const errors: ValidationError[] = useMemo(() => {
    const result = validateRulebookFile(value, context);
    return result.ok ? [] : result.errors;
  }, [value, context]);
  const declared = useMemo(() => declaredOf(value, context), [value, context]);
  const rules = value.rules;
  const setRules = (next: Rule[]) => onChange({ ...value, rules: next });

  const move = (from: number, to: number) => {
    setRules(moveItem(rules, from, to));
    if (open === from) setOpen(to);
    else if (open === to) setOpen(from);
  };
  const remove = (index: number) => {
    setRules(removeItem(rules, index));
    if (open === index) setOpen(null);
    else if (open !== null && open > index) setOpen(open - 1);
  };
  const duplicate = (index: number) => {
    setRules(duplicateRule(rules, index));
    if (open !== null && open > index) setOpen(open + 1);
  };
  const addRule = () => {
    setRules([...rules, { id: uniqueName("new-rule", rules.map((r) => r.id)), on: "standing", do: [] }]);
    setOpen(rules.length);
  };

  const unplaced = errors.filter((e) => !PLACED.test(e.path));

  return (
    <div className="space-y-6">
      <DeclarationTables rulebook={value} context={context} errors={errors} onChange={onChange} />

      <section aria-label="Rules" className="space-y-2">
        <h3 className="text-sm font-bold text-ink">Rules, in the order they are tried</h3>
        {rules.length === 0 ? <p className="text-sm text-ink-faint">No rules yet.</p> : null}
        <table className="w-full text-left text-sm">
          <thead className="text-xs text-ink-soft">
            <tr>
              <th scope="col" className="py-1 pr-2">#</th>
              <th scope="col" className="py-1 pr-2">Id</th>
              <th scope="col" className="py-1 pr-2">Trigger</th>
              <th scope="col" className="py-1 pr-2">Reads as</th>
              <th scope="col" className="py-1">Change</th>
            </tr>
          </thead>
          <tbody>
            {rules.map((rule, index) => {
              const rulePath = `$.rules[${index}]`;
              const ruleErrors = errorsUnder(errors, rulePath);
              const isOpen = open === index;
              const shownBeside = isOpen ? ruleErrors.filter((e) => !RULE_FIELDS.some((f) => e.path.startsWith(`${rulePath}.${f}`))) : ruleErrors;
              const name = typeof rule.id === "string" && rule.id ? rule.id : `rule ${index + 1}`;
              return (
                <Fragment key={index}>
                  <tr className={`border-t border-panel-700 align-top ${ruleErrors.length > 0 ? "bg-aspect-danger/5" : ""}`} data-testid={`rule-row-${index}`}>
                    <td className="py-2 pr-2 text-ink-faint">{index + 1}</td>
                    <td className="py-2 pr-2">
                      <code className="text-brass">{rule.id}</code>
                      {ruleErrors.length > 0 ? (
                        <span className="ml-2 text-xs text-notice-error">
                          {ruleErrors.length} {ruleErrors.length === 1 ? "problem" : "problems"}
                        </span>
                      ) : null}
                    </td>
                    <td className="py-2 pr-2 whitespace-nowrap">{triggerSummary(rule.on)}</td>
                    <td className="py-2 pr-2">
                      <p>{sentence(rule)}</p>
                      <FieldErrors errors={shownBeside} />
                    </td>
                    <td className="py-2">
                      <div className="flex flex-wrap gap-1">
                        <Button aria-expanded={isOpen} onClick={() => setOpen(isOpen ? null : index)}>
                          {isOpen ? "Close" : "Edit"} <span className="sr-only">{name}</span>
                        </Button>
                        <Button disabled={index === 0} onClick={() => move(index, index - 1)}>
                          Up <span className="sr-only">{name}</span>
                        </Button>
                        <Button disabled={index === rules.length - 1} onClick={() => move(index, index + 1)}>
                          Down <span className="sr-only">{name}</span>
                        </Button>
                        <Button onClick={() => duplicate(index)}>
                          Duplicate <span className="sr-only">{name}</span>
                        </Button>
                        <Button tone="danger" onClick={() => remove(index)}>
                          Delete <span className="sr-only">{name}</span>
                        </Button>
                      </div>
                    </td>
                  </tr>
                  {isOpen ? (
                    <tr>
                      <td colSpan={5} className="pb-3">
                        <RuleEditor rule={rule} rulePath={rulePath} declared={declared} errors={errors} onChange={(next) => setRules(replaceItem(rules, index, next))} />
                      </td>
                    </tr>
                  ) : null}
                </Fragment>
              );
            })}
          </tbody>
        </table>
        <Button onClick={addRule}>Add rule</Button>
      </section>

      <ProvingEditor rulebook={value} context={context} errors={errors} defaultAxles={defaultAxles} onChange={onChange} />
      <ErrorList errors={unplaced} title="Other problems in the draft" />
    </div>
  );
}
