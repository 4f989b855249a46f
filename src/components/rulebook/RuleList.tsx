import type { Rulebook } from "@shared/rulebook/schema";
import { describeRule } from "@shared/rulebook/describe";

interface RuleListProps {
  rulebook: Rulebook;
}

function Declared({ rulebook }: RuleListProps) {
  const latches = Object.entries(rulebook.latches);
  const counters = Object.entries(rulebook.counters);
  const selectors = Object.entries(rulebook.selectors);
  const initial = Object.entries(rulebook.initial);
  return (
    <dl className="print-keep grid gap-x-6 gap-y-2 text-sm sm:grid-cols-[max-content_1fr]">
      <dt className="font-semibold text-ink-soft">Latches</dt>
      <dd>{latches.length ? latches.map(([name, on]) => `${name} (starts ${on ? "set" : "clear"})`).join(", ") : "none"}</dd>
      <dt className="font-semibold text-ink-soft">Counters</dt>
      <dd>{counters.length ? counters.map(([name, n]) => `${name} (starts at ${n})`).join(", ") : "none"}</dd>
      <dt className="font-semibold text-ink-soft">Selectors</dt>
      <dd>
        {selectors.length
          ? selectors.map(([name, s]) => `${name}: one of ${s.values.join(" / ")} (starts ${s.initial})`).join("; ")
          : "none"}
      </dd>
      <dt className="font-semibold text-ink-soft">Signals start at</dt>
      <dd>{initial.length ? initial.map(([signal, aspect]) => `${signal} ${aspect}`).join(", ") : "danger (not stated)"}</dd>
    </dl>
  );
}

/** Every rule as a plain sentence, in the order the engine tries them. */
export function RuleList({ rulebook }: RuleListProps) {
  return (
    <div className="space-y-4">
      <Declared rulebook={rulebook} />
      {rulebook.rules.length === 0 ? (
        <p className="text-ink-faint">This rulebook has no rules.</p>
      ) : (
        <ol className="space-y-2">
          {rulebook.rules.map((rule, index) => (
            <li key={rule.id} className="print-keep rounded-md border border-panel-700 bg-panel-950 p-3">
              <div className="mb-1 flex flex-wrap items-baseline gap-2 text-xs text-ink-faint">
                <span>{index + 1}.</span>
                <code className="text-brass">{rule.id}</code>
                <span>{rule.on === "standing" ? "standing rule" : "pass" in rule.on ? "on a pulse" : "quiet trigger"}</span>
              </div>
              <p className="text-base leading-relaxed">{describeRule(rule)}</p>
              {rule.note ? <p className="mt-1 text-sm italic text-ink-soft">{rule.note}</p> : null}
            </li>
          ))}
        </ol>
      )}
    </div>
  );
}
