import { useDeferredValue, useEffect, useId, useMemo, useState } from "react";
import { useNavigate } from "react-router-dom";
import type { RulebookVersionDetail } from "@shared/contract/rest";
import type { Rulebook } from "@shared/rulebook/schema";
import { validateRulebookFile, type RulebookContext } from "@shared/rulebook/validate";
import { ApiError, type FieldError } from "../../api/http";
import { useSaveDraftMutation } from "../../api/rulebooks";
import { clearDraft, readDraft, writeDraft } from "../../lib/draftStore";
import { Button } from "../ui/Button";
import { ErrorList } from "../ui/ErrorList";
import { DraftForm, DraftTabs, type DraftView } from "./form/DraftViews";
import { provingAxles } from "../../lib/longestTrain";
import { paths } from "../../lib/paths";

export function prettyRulebook(rulebook: Rulebook): string {
  return JSON.stringify(rulebook, null, 2) + "\n";
}

type Check = { ok: true; rulebook: Rulebook; raw: unknown } | { ok: false; errors: FieldError[] };

/** Parse, then the same checks the server makes, so problems show while typing. */
function checkText(text: string, context: RulebookContext): Check {
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch (cause) {
    return { ok: false, errors: [{ path: "$", message: `Not valid JSON: ${cause instanceof Error ? cause.message : String(cause)}` }] };
  }
  const result = validateRulebookFile(raw, context);
  return result.ok ? { ok: true, rulebook: result.rulebook, raw } : { ok: false, errors: result.errors };
}

interface RulebookEditorProps {
  slug: string;
  context: RulebookContext;
  /** The version shown on the page; the editor can start again from it. */
  selected: RulebookVersionDetail;
  onSaved: (version: number) => void;
}

/** The rulebook as JSON, checked as you type, saved as a new draft version. */
export function RulebookEditor({ slug, context, selected, onSaved }: RulebookEditorProps) {
  const textareaId = useId();
  const noteId = useId();
  const navigate = useNavigate();
  const saveDraft = useSaveDraftMutation(slug);

  const [restored] = useState(() => readDraft(slug));
  const [basedOn, setBasedOn] = useState<number>(restored?.basedOn ?? selected.version);
  const [baseText, setBaseText] = useState(() => prettyRulebook(selected.rulebook));
  const [text, setText] = useState(() => restored?.text ?? prettyRulebook(selected.rulebook));
  const [note, setNote] = useState("");
  const [view, setView] = useState<DraftView>("form");
  const [serverErrors, setServerErrors] = useState<FieldError[]>([]);
  const [savedAs, setSavedAs] = useState<number | null>(null);

  const deferredText = useDeferredValue(text);
  const check = useMemo(() => checkText(deferredText, context), [deferredText, context]);
  const dirty = text !== baseText;

  // Keep unsaved work across the trip to the simulator and back.
  useEffect(() => {
    if (dirty) writeDraft(slug, { text, basedOn });
    else clearDraft(slug);
  }, [slug, text, basedOn, dirty]);

  const startFrom = (version: RulebookVersionDetail) => {
    const fresh = prettyRulebook(version.rulebook);
    setBasedOn(version.version);
    setBaseText(fresh);
    setText(fresh);
    setServerErrors([]);
    setSavedAs(null);
  };

  const save = async () => {
    if (!check.ok) return;
    setServerErrors([]);
    setSavedAs(null);
    try {
      const result = await saveDraft.mutateAsync({ rulebook: check.raw, note: note.trim() || undefined });
      setSavedAs(result.version);
      setBasedOn(result.version);
      setBaseText(text);
      setNote("");
      onSaved(result.version);
    } catch (error) {
      if (error instanceof ApiError) {
        setServerErrors(error.fieldErrors.length > 0 ? error.fieldErrors : [{ path: "", message: error.message }]);
      } else {
        setServerErrors([{ path: "", message: "Saving failed. Try again." }]);
      }
    }
  };

  const trySimulator = () => {
    writeDraft(slug, { text, basedOn });
    navigate(paths.simulate({ slug }, { query: { version: "draft" } }), { state: { source: "draft" } });
  };

  const errorCount = check.ok ? 0 : check.errors.length;

  return (
    <div className="space-y-3">
      <div className="flex flex-wrap items-center justify-between gap-2 text-sm text-ink-soft">
        <span>
          Based on v{basedOn}
          {dirty ? " · unsaved changes" : ""}
          {restored && dirty ? " (restored from this browser tab)" : ""}
        </span>
        {selected.version !== basedOn || dirty ? (
          <Button onClick={() => startFrom(selected)}>Start again from v{selected.version}</Button>
        ) : null}
      </div>
      <DraftTabs idBase={textareaId} view={view} onView={setView}>
        {view === "form" ? (
          <DraftForm
            text={text}
            context={context}
            defaultAxles={provingAxles(slug)}
            onChange={(next) => {
              setText(prettyRulebook(next));
              setSavedAs(null);
            }}
          />
        ) : (
          <>
            <label htmlFor={textareaId} className="block text-sm font-semibold text-ink-soft">
              Rulebook (JSON)
            </label>
            <textarea
              id={textareaId}
              value={text}
              onChange={(event) => {
                setText(event.target.value);
                setSavedAs(null);
              }}
              spellCheck={false}
              rows={24}
              aria-invalid={errorCount > 0 ? true : undefined}
              aria-describedby={`${textareaId}-check`}
              className="w-full rounded-md border border-panel-600 bg-panel-950 p-3 font-mono text-sm leading-relaxed text-ink focus:border-brass"
            />
          </>
        )}
      </DraftTabs>
      <div id={`${textareaId}-check`} aria-live="polite">
        {check.ok ? (
          <p className="text-sm text-notice-ok">No problems found: {check.rulebook.rules.length} rules.</p>
        ) : (
          <ErrorList errors={check.errors} title={`${errorCount} ${errorCount === 1 ? "problem" : "problems"} to fix before saving`} />
        )}
      </div>
      <ErrorList errors={serverErrors} title="The server refused this draft" />
      <div className="space-y-1">
        <label htmlFor={noteId} className="block text-sm font-semibold text-ink-soft">
          Note for this version (optional)
        </label>
        <input
          id={noteId}
          value={note}
          maxLength={500}
          onChange={(event) => setNote(event.target.value)}
          className="w-full rounded-md border border-panel-600 bg-panel-950 px-3 py-2 text-sm text-ink"
        />
      </div>
      <div className="flex flex-wrap items-center gap-2">
        <Button tone="primary" onClick={save} disabled={!check.ok || saveDraft.isPending}>
          {saveDraft.isPending ? "Saving…" : "Save as new draft"}
        </Button>
        <Button onClick={trySimulator} disabled={!check.ok}>
          Try this draft in the simulator
        </Button>
        {savedAs !== null ? (
          <span role="status" className="text-sm text-notice-ok">
            Saved as draft v{savedAs}.
          </span>
        ) : null}
      </div>
    </div>
  );
}
