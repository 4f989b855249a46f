import { useMemo, useRef, type ReactNode } from "react";
import type { Rulebook } from "@shared/rulebook/schema";
import type { RulebookContext } from "@shared/rulebook/validate";
import { asFormRulebook } from "../../../lib/ruleEdit";
import { RuleFormEditor } from "./RuleFormEditor";

export type DraftView = "form" | "json";

const VIEWS: { id: DraftView; label: string }[] = [
  { id: "form", label: "Form" },
  { id: "json", label: "JSON" },
];

interface DraftTabsProps {
  idBase: string;
  view: DraftView;
  onView: (view: DraftView) => void;
  children: ReactNode;
}

/** Two views of one draft, as tabs: arrow keys, Home and End move between them. */
export function DraftTabs({ idBase, view, onView, children }: DraftTabsProps) {
  const refs = useRef<Record<DraftView, HTMLButtonElement | null>>({ form: null, json: null });
  const go = (index: number) => {
    const next = VIEWS[(index + VIEWS.length) % VIEWS.length].id;
    onView(next);
    refs.current[next]?.focus();
  };
  return (
    <div className="space-y-3">
      <div role="tablist" aria-label="Edit the draft as" className="flex gap-1 border-b border-panel-700">
        {VIEWS.map((tab, index) => {
          const selected = tab.id === view;
          return (
            <button
              key={tab.id}
              ref={(element) => {
                refs.current[tab.id] = element;
              }}
              type="button"
              role="tab"
              id={`${idBase}-tab-${tab.id}`}
              aria-selected={selected}
              aria-controls={`${idBase}-panel`}
              tabIndex={selected ? 0 : -1}
              onClick={() => onView(tab.id)}
              onKeyDown={(event) => {
                if (event.key === "ArrowRight") go(index + 1);
                else if (event.key === "ArrowLeft") go(index - 1);
                else if (event.key === "Home") go(0);
                else if (event.key === "End") go(VIEWS.length - 1);
                else return;
                event.preventDefault();
              }}
              className={`-mb-px rounded-t-md border px-4 py-1.5 text-sm font-semibold ${
                selected ? "border-panel-700 border-b-panel-900 bg-panel-900 text-brass" : "border-transparent text-ink-soft hover:text-ink"
              }`}
            >
              {tab.label}
            </button>
          );
        })}
      </div>
      <div role="tabpanel" id={`${idBase}-panel`} aria-labelledby={`${idBase}-tab-${view}`}>
        {children}
      </div>
    </div>
  );
}

interface DraftFormProps {
  /** The draft exactly as the JSON tab holds it. */
  text: string;
  context: RulebookContext;
  onChange: (next: Rulebook) => void;
  defaultAxles?: number;
}

/** The form view of the draft text; text that is not yet a rulebook is left to the JSON tab. */
export function DraftForm({ text, context, onChange, defaultAxles }: DraftFormProps) {
  const rulebook = useMemo(() => {
    try {
      return asFormRulebook(JSON.parse(text));
    } catch {
      return null;
    }
  }, [text]);
  if (!rulebook) {
    return (
      <p role="status" className="rounded-md border border-panel-600 p-3 text-sm text-ink-soft">
        The draft is not a readable rulebook yet (it needs to be JSON with a list of rules). Fix it in the JSON tab, then come back
        to the form.
      </p>
    );
  }
  return <RuleFormEditor value={rulebook} context={context} onChange={onChange} defaultAxles={defaultAxles} />;
}
