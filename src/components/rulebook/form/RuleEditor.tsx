import { TRIGGER_KINDS, type TriggerKind } from "@shared/rulebook/kinds";
import type { Rule, Trigger } from "@shared/rulebook/schema";
import type { ValidationError } from "@shared/rulebook/validate";
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

const DEFAULT_QUIET_MS = 5000;

const TRIGGER_LABELS: Record<TriggerKind, string> = {
  standing: "whenever it holds (standing rule)",
  pass: "when a wheelset passes",
  moved: "when points are reported lying otherwise",
  quiet: "when a detector has been quiet",
};

/** The trigger's kind, or null for a shape the form does not know (a draft may be anything). */
function triggerKindOf(trigger: unknown): TriggerKind | null {
  if (trigger === "standing") return "standing";
  if (trigger === null || typeof trigger !== "object") return null;
  return TRIGGER_KINDS.find((kind) => kind !== "standing" && kind in trigger) ?? null;
}

function TriggerFields({ trigger, rulePath, declared, errors, onChange }: { trigger: Trigger; rulePath: string; declared: Declared; errors: readonly ValidationError[]; onChange: (next: Trigger) => void }) {
  const kind = triggerKindOf(trigger);
  const here = `${rulePath}.on`;
  const problems = errorsUnder(errors, here);
  const detector = trigger !== "standing" && trigger !== null && typeof trigger === "object" ? ("pass" in trigger ? trigger.pass : "quiet" in trigger ? trigger.quiet : "") : "";
  const points = trigger !== null && typeof trigger === "object" && "moved" in trigger ? trigger.moved : "";
  const firstDetector = detector || declared.detectors[0] || "";
  const change = (next: TriggerKind) => {
    const made: Record<TriggerKind, () => Trigger> = {
      standing: () => "standing",
      pass: () => ({ pass: firstDetector }),
      moved: () => ({ moved: points || declared.points[0]?.id || "" }),
      quiet: () => ({ quiet: firstDetector, ms: DEFAULT_QUIET_MS }),
    };
    onChange(made[next]());
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
            ...TRIGGER_KINDS.map((value) => ({ value, label: TRIGGER_LABELS[value] })),
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
        {kind === "moved" ? (
          <SelectField label="Points" value={points} options={namesWith(points, declared.points.map((p) => p.id), "not points here")} onChange={(id) => onChange({ moved: id })} />
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
