import { memo } from "react";
import type { LiveState } from "@shared/contract/live";
import type { LayoutSignal } from "@shared/layout/schema";
import type { Rulebook } from "@shared/rulebook/schema";
import { whyAtDanger, type Blocker } from "../../lib/whyAtDanger";
import { Button } from "../ui/Button";
import { describeCommand, type CommandDraft } from "./CommandDialog";

interface WhyAtDangerProps {
  rulebook: Rulebook | undefined;
  state: LiveState;
  signals: LayoutSignal[];
  /** Present for signallers and admins: each fix opens the command dialog (with its reason). */
  onCommand?: (command: CommandDraft) => void;
}

/** For every signal at danger: the rule and the state that keep it there, and the command that would change it. */
export const WhyAtDanger = memo(function WhyAtDanger({ rulebook, state, signals, onCommand }: WhyAtDangerProps) {
  if (!rulebook) return <p className="text-sm text-ink-faint">No rulebook is running.</p>;
  const atDanger = signals.filter((s) => (state.shown[s.id] ?? "danger") === "danger");
  if (atDanger.length === 0) return <p className="text-sm text-ink-faint">No signal is at danger.</p>;
  return (
    <ul className="space-y-2 text-sm">
      {atDanger.map((s) => {
        const why = whyAtDanger(rulebook, state, s.id);
        return (
          <li key={s.id} data-why={s.id}>
            <details>
              <summary className="cursor-pointer font-semibold">
                Why is {s.id} ({s.name}) at danger?
              </summary>
              <div className="mt-1 space-y-1 pl-4">
                <p>{why.summary}</p>
                {why.rules.length > 0 ? (
                  <ul className="list-disc pl-5">
                    {why.rules.map((r) => (
                      <li key={r.id}>
                        Rule <strong>{r.id}</strong> would take it off danger {r.trigger}
                        {r.blockers.length ? ", but it " : "."}
                        {r.blockers.map((b) => b.text).join("; ")}
                      </li>
                    ))}
                  </ul>
                ) : null}
                <Fixes blockers={why.blockers} onCommand={onCommand} />
              </div>
            </details>
          </li>
        );
      })}
    </ul>
  );
});

function Fixes({ blockers, onCommand }: { blockers: Blocker[]; onCommand?: (command: CommandDraft) => void }) {
  const fixes = blockers.flatMap((b) => (b.command ? [b.command] : []));
  if (fixes.length === 0) return <p className="text-ink-faint">No signaller command changes this: it waits for the trains (pulses) or another rule.</p>;
  return (
    <div className="flex flex-wrap items-center gap-2">
      <span className="text-ink-soft">Would change it (check the line first):</span>
      {fixes.map((c) =>
        onCommand ? (
          <Button key={JSON.stringify(c)} className="px-2 py-0.5 text-xs" onClick={() => onCommand(c)}>
            {describeCommand(c).confirm}
          </Button>
        ) : (
          <span key={JSON.stringify(c)} className="rounded border border-panel-600 px-2 py-0.5 text-xs">
            {describeCommand(c).confirm}
          </span>
        ),
      )}
    </div>
  );
}
