import type { Rule, Trigger } from "../../../../shared/rulebook/schema";
import type { ValidationError } from "../../../../shared/rulebook/validate";
import { withField, type Declared } from "../../../lib/ruleEdit";
import { ActionsEditor } from "./ActionsEditor";
import { ConditionEditor } from "./ConditionEditor";
import { FieldErrors, NumberField, SelectField, TextField, errorsUnder, namesWith } from "./fields";

interface RuleEditorProps {
  rule: Rule;
  /** JSON path of the rule, e.g. `$.rules[3]`. */
  rulePath: string;
  declared: Declared;
  errors: readonly ValidationError[];
  onChange: (next: Rule) => void;
}

type TriggerKind = "standing" | "pass" | "quiet";

const DEFAULT_QUIET_MS = 5000;

function triggerKind(trigger: unknown): TriggerKind | null {
  if (trigger === "standing") return "standing";
  if (trigger !== null && typeof trigger === "object") {
    if ("pass" in trigger) return "pass";
    if ("quiet" in trigger) return "quiet";
  }
  return null;
}

function TriggerFields({ trigger, rulePath, declared, errors, onChange }: { trigger: Trigger; rulePath: string; declared: Declared; errors: readonly ValidationError[]; onChange: (next: Trigger) => void }) {
  const kind = triggerKind(trigger);
  const here = `${rulePath}.on`;
  const problems = errorsUnder(errors, here);
  const detector = trigger !== "standing" && trigger !== null && typeof trigger === "object" ? ("pass" in trigger ? trigger.pass : trigger.quiet) : "";
  const firstDetector = detector || declared.detectors[0] || "";
  const change = (next: TriggerKind) => {
    if (next === "standing") onChange("standing");
    else if (next === "pass") onChange({ pass: firstDetector });
    else onChange({ quiet: firstDetector, ms: DEFAULT_QUIET_MS });
  };
  return (
    <fieldset className="space-y-1">
      <legend className="text-xs font-semibold text-ink-soft">Trigger (on)</legend>
      <div className="flex flex-wrap items-end gap-2">
        <SelectField
          label="Runs"
          value={kind ?? ""}
          options={[
            ...(kind === null ? [{ value: "", label: "(not understood: see JSON)" }] : []),
            { value: "standing", label: "whenever it holds (standing rule)" },
            { value: "pass", label: "when a wheelset passes" },
            { value: "quiet", label: "when a detector has been quiet" },
          ]}
          invalid={problems.length > 0}
          onChange={(value) => change(value as TriggerKind)}
        />
        {kind === "pass" || kind === "quiet" ? (
          <SelectField
            label="Detector"
            value={detector}
            options={namesWith(detector, declared.detectors, "not a detector here")}
            onChange={(id) => onChange(kind === "pass" ? { pass: id } : { quiet: id, ms: (trigger as { ms: number }).ms })}
          />
        ) : null}
        {kind === "quiet" && typeof trigger === "object" && "quiet" in trigger ? (
          <NumberField label="Quiet for (ms)" value={trigger.ms} min={1} onChange={(ms) => onChange({ ...trigger, ms })} />
        ) : null}
      </div>
      <FieldErrors errors={problems} />
    </fieldset>
  );
}

/** Everything about one rule: id, note, trigger, condition and actions. */
export function RuleEditor({ rule, rulePath, declared, errors, onChange }: RuleEditorProps) {
  const idProblems = errors.filter((e) => e.path === `${rulePath}.id`);
  const noteProblems = errors.filter((e) => e.path === `${rulePath}.note`);
  return (
    <div role="group" aria-label={`Rule ${rule.id}`} className="space-y-4 rounded-md border border-panel-600 bg-panel-900 p-3">
      <div className="flex flex-wrap gap-3">
        <div>
          <TextField label="Rule id" value={typeof rule.id === "string" ? rule.id : ""} maxLength={64} invalid={idProblems.length > 0} onChange={(id) => onChange({ ...rule, id })} />
          <FieldErrors errors={idProblems} />
        </div>
        <div className="min-w-64 flex-1">
          <TextField
            label="Note (optional)"
            value={rule.note ?? ""}
            maxLength={500}
            onChange={(note) => onChange(withField(rule, "note", note || undefined, "on"))}
          />
          <FieldErrors errors={noteProblems} />
        </div>
      </div>
      <TriggerFields trigger={rule.on} rulePath={rulePath} declared={declared} errors={errors} onChange={(on) => onChange({ ...rule, on })} />
      <ConditionEditor
        condition={rule.if}
        rulePath={rulePath}
        declared={declared}
        errors={errors}
        onChange={(next) => onChange(withField(rule, "if", next, "do"))}
      />
      <ActionsEditor
        actions={Array.isArray(rule.do) ? rule.do : []}
        rulePath={rulePath}
        standing={rule.on === "standing"}
        declared={declared}
        errors={errors}
        onChange={(next) => onChange({ ...rule, do: next })}
      />
    </div>
  );
}
