import { useId, useState, type ReactNode } from "react";
import type { Aspect, Rulebook } from "@shared/rulebook/schema";
import type { RulebookContext, ValidationError } from "@shared/rulebook/validate";
import { toJsonPath } from "@shared/rulebook/validate";
import { renameKey, withoutKey } from "../../../lib/ruleEdit";
import { Button } from "../../ui/Button";
import { CommitTextField, FieldErrors, NumberField, SelectField, errorsUnder } from "./fields";

interface DeclarationTablesProps {
  rulebook: Rulebook;
  context: RulebookContext;
  errors: readonly ValidationError[];
  onChange: (next: Rulebook) => void;
}

const MAX_NAME = 64;

/** Why `name` cannot be used for a new or renamed entry, or null when it can. */
function nameProblem(name: string, taken: readonly string[]): string | null {
  if (!name) return "A name is needed.";
  if (name.length > MAX_NAME) return `At most ${MAX_NAME} characters.`;
  if (taken.includes(name)) return `"${name}" is already declared.`;
  return null;
}

function Section({ title, children }: { title: string; children: ReactNode }) {
  return (
    <section aria-label={title} className="space-y-2">
      <h3 className="text-sm font-bold text-ink">{title}</h3>
      {children}
    </section>
  );
}

function AddName({ what, taken, onAdd }: { what: string; taken: readonly string[]; onAdd: (name: string) => void }) {
  const [name, setName] = useState("");
  const [problem, setProblem] = useState<string | null>(null);
  const inputId = useId();
  const add = () => {
    const trimmed = name.trim();
    const reason = nameProblem(trimmed, taken);
    setProblem(reason);
    if (reason) return;
    onAdd(trimmed);
    setName("");
  };
  return (
    <div className="flex flex-wrap items-end gap-2">
      <div className="flex flex-col gap-0.5">
        <label htmlFor={inputId} className="text-xs font-semibold text-ink-soft">
          New {what} name
        </label>
        <input
          id={inputId}
          value={name}
          onChange={(event) => setName(event.target.value)}
          onKeyDown={(event) => {
            if (event.key === "Enter") {
              event.preventDefault();
              add();
            }
          }}
          className="rounded-md border border-panel-600 bg-panel-950 px-2 py-1 text-sm text-ink focus:border-brass"
        />
      </div>
      <Button onClick={add}>Add {what}</Button>
      {problem ? <span className="text-xs text-notice-error">{problem}</span> : null}
    </div>
  );
}

const TABLE = "w-full text-left text-sm";
const CELL = "py-1 pr-3 align-top";

/** Latches, counters, selectors and starting aspects, each as a table with add and remove. */
export function DeclarationTables({ rulebook, context, errors, onChange }: DeclarationTablesProps) {
  const latches = Object.entries(rulebook.latches);
  const counters = Object.entries(rulebook.counters);
  const selectors = Object.entries(rulebook.selectors);
  const pathOf = (table: string, name: string) => `$.${table}${toJsonPath([name], "")}`;
  /** Renames a declaration (rules that use the old name then show an error until changed). */
  const rename = (table: "latches" | "counters" | "selectors", from: string, to: string): string | null => {
    const problem = nameProblem(to, Object.keys(rulebook[table]).filter((n) => n !== from));
    if (problem === null) onChange({ ...rulebook, [table]: renameKey<unknown>(rulebook[table], from, to) });
    return problem;
  };

  const layoutSignals = context.signals.map((s) => s.id);
  const strayInitial = Object.keys(rulebook.initial).filter((id) => !layoutSignals.includes(id));

  return (
    <div className="grid gap-6 lg:grid-cols-2">
      <Section title="Latches">
        {latches.length === 0 ? <p className="text-sm text-ink-faint">No latches.</p> : null}
        <table className={TABLE}>
          <tbody>
            {latches.map(([name, on]) => (
              <tr key={name}>
                <td className={CELL}>
                  <CommitTextField
                    label="Latch name"
                    value={name}
                    onCommit={(next) => rename("latches", name, next)}
                  />
                </td>
                <td className={CELL}>
                  <SelectField
                    label="Starts"
                    value={on ? "set" : "clear"}
                    options={[{ value: "clear" }, { value: "set" }]}
                    onChange={(value) => onChange({ ...rulebook, latches: { ...rulebook.latches, [name]: value === "set" } })}
                  />
                  <FieldErrors errors={errorsUnder(errors, pathOf("latches", name))} />
                </td>
                <td className={`${CELL} align-bottom`}>
                  <Button aria-label={`Remove latch ${name}`} onClick={() => onChange({ ...rulebook, latches: withoutKey(rulebook.latches, name) })}>
                    Remove
                  </Button>
                </td>
              </tr>
            ))}
          </tbody>
        </table>
        <AddName what="latch" taken={latches.map(([n]) => n)} onAdd={(name) => onChange({ ...rulebook, latches: { ...rulebook.latches, [name]: false } })} />
      </Section>

      <Section title="Counters">
        {counters.length === 0 ? <p className="text-sm text-ink-faint">No counters.</p> : null}
        <table className={TABLE}>
          <tbody>
            {counters.map(([name, value]) => (
              <tr key={name}>
                <td className={CELL}>
                  <CommitTextField
                    label="Counter name"
                    value={name}
                    onCommit={(next) => rename("counters", name, next)}
                  />
                </td>
                <td className={CELL}>
                  <NumberField
                    label="Starts at"
                    value={value}
                    min={0}
                    invalid={errorsUnder(errors, pathOf("counters", name)).length > 0}
                    onChange={(next) => onChange({ ...rulebook, counters: { ...rulebook.counters, [name]: next } })}
                  />
                  <FieldErrors errors={errorsUnder(errors, pathOf("counters", name))} />
                </td>
                <td className={`${CELL} align-bottom`}>
                  <Button aria-label={`Remove counter ${name}`} onClick={() => onChange({ ...rulebook, counters: withoutKey(rulebook.counters, name) })}>
                    Remove
                  </Button>
                </td>
              </tr>
            ))}
          </tbody>
        </table>
        <AddName what="counter" taken={counters.map(([n]) => n)} onAdd={(name) => onChange({ ...rulebook, counters: { ...rulebook.counters, [name]: 0 } })} />
      </Section>

      <Section title="Selectors">
        {selectors.length === 0 ? <p className="text-sm text-ink-faint">No selectors.</p> : null}
        <table className={TABLE}>
          <tbody>
            {selectors.map(([name, selector]) => {
              const values = Array.isArray(selector?.values) ? selector.values : [];
              const setSelector = (next: Rulebook["selectors"][string]) => onChange({ ...rulebook, selectors: { ...rulebook.selectors, [name]: next } });
              return (
                <tr key={name}>
                  <td className={CELL}>
                    <CommitTextField
                      label="Selector name"
                      value={name}
                      onCommit={(next) => rename("selectors", name, next)}
                    />
                  </td>
                  <td className={CELL}>
                    <CommitTextField
                      label="Values (comma between)"
                      value={values.join(", ")}
                      onCommit={(text) => {
                        const next = text.split(",").map((v) => v.trim()).filter(Boolean);
                        if (next.length === 0) return "A selector needs at least one value.";
                        setSelector({ values: next, initial: next.includes(selector.initial) ? selector.initial : next[0] });
                        return null;
                      }}
                    />
                  </td>
                  <td className={CELL}>
                    <SelectField
                      label="Starts"
                      value={selector?.initial ?? ""}
                      options={values.map((v) => ({ value: v }))}
                      onChange={(initial) => setSelector({ values, initial })}
                    />
                    <FieldErrors errors={errorsUnder(errors, pathOf("selectors", name))} />
                  </td>
                  <td className={`${CELL} align-bottom`}>
                    <Button aria-label={`Remove selector ${name}`} onClick={() => onChange({ ...rulebook, selectors: withoutKey(rulebook.selectors, name) })}>
                      Remove
                    </Button>
                  </td>
                </tr>
              );
            })}
          </tbody>
        </table>
        <AddName
          what="selector"
          taken={selectors.map(([n]) => n)}
          onAdd={(name) => onChange({ ...rulebook, selectors: { ...rulebook.selectors, [name]: { values: ["none"], initial: "none" } } })}
        />
      </Section>

      <Section title="Signals start at">
        {context.signals.length === 0 && strayInitial.length === 0 ? <p className="text-sm text-ink-faint">This layout has no signals.</p> : null}
        <table className={TABLE}>
          <tbody>
            {context.signals.map((signal) => (
              <tr key={signal.id}>
                <td className={CELL}>
                  <SelectField
                    label={`Signal ${signal.id} starts at`}
                    value={rulebook.initial[signal.id] ?? ""}
                    options={[{ value: "", label: "not stated (danger)" }, ...signal.aspects.map((a) => ({ value: a }))]}
                    onChange={(aspect) =>
                      onChange({
                        ...rulebook,
                        initial: aspect ? { ...rulebook.initial, [signal.id]: aspect as Aspect } : withoutKey(rulebook.initial, signal.id),
                      })
                    }
                  />
                  <FieldErrors errors={errorsUnder(errors, pathOf("initial", signal.id))} />
                </td>
              </tr>
            ))}
            {strayInitial.map((id) => (
              <tr key={id}>
                <td className={CELL}>
                  <span className="text-sm">
                    {id}: {rulebook.initial[id]} (not a signal of this layout)
                  </span>
                  <FieldErrors errors={errorsUnder(errors, pathOf("initial", id))} />
                </td>
                <td className={CELL}>
                  <Button aria-label={`Remove starting aspect of ${id}`} onClick={() => onChange({ ...rulebook, initial: withoutKey(rulebook.initial, id) })}>
                    Remove
                  </Button>
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </Section>
    </div>
  );
}
