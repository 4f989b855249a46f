import { describeRule } from "@shared/rulebook/describe";
import type { Rulebook } from "@shared/rulebook/schema";

/** The generated rulebook read out: every rule as a sentence, then what the proof will check. */
export function GeneratedRules({ rulebook }: { rulebook: Rulebook }) {
  return (
    <div className="space-y-3 text-sm">
      <ol className="list-decimal space-y-1 pl-6" aria-label="Generated rules">
        {rulebook.rules.map((rule) => (
          <li key={rule.id}>
            <code className="text-brass">{rule.id}</code> {describeRule(rule)}
            {rule.note ? <span className="block text-xs text-ink-faint">{rule.note}</span> : null}
          </li>
        ))}
      </ol>
      {rulebook.proving ? (
        <p className="text-ink-soft">
          The proof will try every order of up to {rulebook.proving.maxTrainsPerRoute} trains of 1–{rulebook.proving.maxAxles} axles on the routes{" "}
          {rulebook.proving.routes.map((r) => r.id).join(", ")}
          {rulebook.proving.priority ? `, with ${rulebook.proving.priority} as the priority route` : ""}.
        </p>
      ) : null}
    </div>
  );
}
