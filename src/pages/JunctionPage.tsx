import { useMemo, useState } from "react";
import { useForm } from "react-hook-form";
import { Link, useParams } from "react-router-dom";
import { convergingOptionsSchema, facingOptionsSchema } from "@shared/rulebook/templateCatalog";
import type { Rulebook } from "@shared/rulebook/schema";
import { ApiError } from "../api/http";
import { useLayout } from "../api/layouts";
import { useSaveDraftMutation } from "../api/rulebooks";
import { useGenerateMutation } from "../api/templates";
import { GeneratedRules } from "../components/junction/GeneratedRules";
import { JunctionForm } from "../components/junction/JunctionForm";
import { fieldOfPath, initialValues, JUNCTION_KINDS, optionsOf, templateOf, type JunctionKind, type JunctionValues } from "../components/junction/roleForm";
import { ProofPanel } from "../components/rulebook/ProofPanel";
import { PublishControl } from "../components/rulebook/PublishControl";
import { Button } from "../components/ui/Button";
import { ErrorList } from "../components/ui/ErrorList";
import { Panel } from "../components/ui/Panel";
import { SafetyNote } from "../components/ui/SafetyNote";
import { LoadError, Loading } from "../components/ui/Status";
import { provingAxles } from "../lib/longestTrain";
import { paths } from "../lib/paths";

/** New junction from a template: pick it, map the layout's records to its roles, read, save, prove, publish. */
export default function JunctionPage() {
  const { slug = "" } = useParams();
  const layout = useLayout(slug);
  if (layout.isPending) return <Loading what="the layout" />;
  if (layout.isError) return <LoadError error={layout.error} what="the layout" />;
  if (layout.data.detectors.length === 0 || layout.data.signals.length === 0) {
    return (
      <Panel title="New junction from a template">
        <p className="text-sm">
          A junction needs detectors and signals first. <Link className="text-brass underline" to={paths.layoutEdit({ slug })}>Add them on the workbench</Link>.
        </p>
      </Panel>
    );
  }
  return <JunctionWizard slug={slug} layout={layout.data} />;
}

function JunctionWizard({ slug, layout }: { slug: string; layout: NonNullable<ReturnType<typeof useLayout>["data"]> }) {
  const axles = useMemo(() => provingAxles(slug), [slug]);
  const form = useForm<JunctionValues>({ defaultValues: initialValues(layout, "converging-priority", axles) });
  const generate = useGenerateMutation();
  const saveDraft = useSaveDraftMutation(slug);
  const [rulebook, setRulebook] = useState<Rulebook | null>(null);
  const [savedVersion, setSavedVersion] = useState<number | null>(null);
  const [otherErrors, setOtherErrors] = useState<{ path: string; message: string }[]>([]);
  const kind = form.watch("kind");
  const summary = layout.versions.find((v) => v.version === savedVersion);

  const pick = (next: JunctionKind) => {
    form.reset(initialValues(layout, next, form.getValues("maxAxles") || axles));
    setRulebook(null);
    setSavedVersion(null);
  };

  const place = (errors: { path: string; message: string }[]) => {
    const unplaced: typeof errors = [];
    for (const e of errors) {
      const field = fieldOfPath(e.path);
      if (field === "root") unplaced.push(e);
      else form.setError(field as keyof JunctionValues, { message: e.message });
    }
    setOtherErrors(unplaced);
  };

  const onGenerate = form.handleSubmit(async (values) => {
    setRulebook(null);
    setSavedVersion(null);
    setOtherErrors([]);
    const options = optionsOf(values);
    const schema = templateOf(values.kind) === "converging-junction" ? convergingOptionsSchema : facingOptionsSchema;
    const local = schema.safeParse(options);
    if (!local.success) return place(local.error.issues.map((i) => ({ path: `$.${i.path.join(".")}`.replace(/\.(\d+)/g, "[$1]"), message: i.message })));
    try {
      setRulebook(await generate.mutateAsync({ template: templateOf(values.kind), options }));
    } catch (error) {
      if (error instanceof ApiError && error.fieldErrors.length > 0) place(error.fieldErrors);
      else setOtherErrors([{ path: "", message: error instanceof Error ? error.message : String(error) }]);
    }
  });

  const onSave = async () => {
    if (!rulebook) return;
    const label = JUNCTION_KINDS.find((k) => k.id === kind)?.label ?? kind;
    try {
      const saved = await saveDraft.mutateAsync({ rulebook, note: `From the template: ${label.toLowerCase()}` });
      setSavedVersion(saved.version);
    } catch (error) {
      setOtherErrors(error instanceof ApiError && error.fieldErrors.length > 0 ? error.fieldErrors : [{ path: "", message: String(error) }]);
    }
  };

  return (
    <div className="space-y-6">
      <h1 className="text-2xl font-bold">New junction from a template — {layout.name}</h1>
      <Panel title="1. The kind of junction">
        <div role="radiogroup" aria-label="Template" className="grid gap-2 sm:grid-cols-2">
          {JUNCTION_KINDS.map((k) => (
            <label key={k.id} className={`flex cursor-pointer gap-2 rounded-md border p-3 text-sm ${kind === k.id ? "border-brass bg-panel-850" : "border-panel-700"}`}>
              <input type="radio" name="junction-kind" value={k.id} checked={kind === k.id} onChange={() => pick(k.id)} />
              <span>
                <span className="font-semibold">{k.label}</span>
                <span className="block text-xs text-ink-faint">{k.help}</span>
              </span>
            </label>
          ))}
        </div>
      </Panel>
      <Panel title="2. Which detectors and signals play each part">
        <form onSubmit={(e) => void onGenerate(e)} aria-label="Junction roles" className="space-y-4">
          <JunctionForm key={kind} form={form} records={layout} />
          <Button type="submit" tone="primary" disabled={generate.isPending}>
            {generate.isPending ? "Generating…" : "Generate the rules"}
          </Button>
          <ErrorList errors={otherErrors} title="The rules could not be made" />
        </form>
      </Panel>
      {rulebook ? (
        <Panel
          title="3. The rules, read out"
          actions={
            savedVersion === null ? (
              <Button tone="primary" onClick={() => void onSave()} disabled={saveDraft.isPending}>
                {saveDraft.isPending ? "Saving…" : "Save as a draft"}
              </Button>
            ) : (
              <span role="status" className="text-sm text-notice-ok">
                Saved as draft version {savedVersion}
              </span>
            )
          }
        >
          <GeneratedRules rulebook={rulebook} />
        </Panel>
      ) : null}
      {savedVersion !== null ? (
        <>
          <ProofPanel slug={slug} version={savedVersion} />
          <Panel title="5. Publish" actions={summary ? <PublishControl slug={slug} layoutName={layout.name} version={summary} /> : null}>
            {summary?.live ? (
              <p role="status" className="text-sm text-notice-ok">
                Version {savedVersion} runs live. <Link className="text-brass underline" to={paths.live({ slug })}>Open the live mimic</Link>
              </p>
            ) : (
              <p className="text-sm text-ink-soft">Once proved, publish it to run live; the rulebook page keeps every version.</p>
            )}
            <SafetyNote />
          </Panel>
        </>
      ) : null}
    </div>
  );
}
