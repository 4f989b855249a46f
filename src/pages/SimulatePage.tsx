import { useEffect, useMemo, useState } from "react";
import { useParams, useSearchParams } from "react-router-dom";
import { shownAspects } from "@shared/rulebook/engine";
import { useLayout } from "../api/layouts";
import { useRulebookVersion } from "../api/rulebooks";
import { Mimic } from "../components/mimic/Mimic";
import { ChangeLog } from "../components/simulator/ChangeLog";
import { InputLoader } from "../components/simulator/InputLoader";
import { SimControls } from "../components/simulator/SimControls";
import { StateView } from "../components/simulator/StateView";
import { WhyPanel } from "../components/simulator/WhyPanel";
import { Button } from "../components/ui/Button";
import { ErrorList } from "../components/ui/ErrorList";
import { Panel } from "../components/ui/Panel";
import { LoadError, Loading } from "../components/ui/Status";
import { useDraftRulebook } from "../hooks/useDraftRulebook";
import { useSimulation } from "../hooks/useSimulation";
import { decodeTrace, encodeTrace, parseInputList, placeTrains, runInputList, type InputList } from "../lib/simulation";

const DRAFT = "draft";

export default function SimulatePage() {
  const { slug = "" } = useParams();
  const [search, setSearch] = useSearchParams();
  const layout = useLayout(slug);
  const sim = useSimulation();
  const [runNote, setRunNote] = useState<{ text: string; error?: boolean } | null>(null);

  const versions = useMemo(() => [...(layout.data?.versions ?? [])].sort((a, b) => b.version - a.version), [layout.data]);
  const versionParam = search.get("version");
  const { stored: storedDraft, draft } = useDraftRulebook(slug, layout.data, versionParam === DRAFT);
  const source: number | typeof DRAFT | undefined =
    versionParam === DRAFT && storedDraft
      ? DRAFT
      : versions.some((v) => String(v.version) === versionParam)
        ? Number(versionParam)
        : (versions.find((v) => v.live) ?? versions[0])?.version;

  const stored = useRulebookVersion(slug, typeof source === "number" ? source : undefined);

  const rulebook = source === DRAFT ? (draft?.ok ? draft.rulebook : undefined) : stored.data?.rulebook;
  const traceParam = search.get("trace");

  const { reset } = sim;
  // A new rulebook (or a new ?trace=) starts a fresh run.
  useEffect(() => {
    if (!rulebook) return;
    if (!traceParam) {
      reset(rulebook);
      setRunNote(null);
      return;
    }
    try {
      const entries = runInputList(rulebook, parseInputList(decodeTrace(traceParam)));
      reset(rulebook, entries, 0);
      setRunNote({ text: `Loaded a trace of ${entries.length - 1} steps from the link. Step forward to play it.` });
    } catch (cause) {
      reset(rulebook);
      setRunNote({ text: `The trace in the link could not be played: ${cause instanceof Error ? cause.message : String(cause)}`, error: true });
    }
  }, [rulebook, traceParam, reset]);

  if (layout.isPending) return <Loading what="the layout" />;
  if (layout.isError) return <LoadError error={layout.error} what="the layout" />;

  const chooseSource = (value: string) => {
    const next = new URLSearchParams(search);
    next.set("version", value);
    setSearch(next, { replace: true });
  };

  const loadList = (list: InputList, name: string) => {
    if (!rulebook) return;
    try {
      const entries = runInputList(rulebook, list);
      reset(rulebook, entries, 0);
      setRunNote({ text: `Loaded ${entries.length - 1} steps from ${name}. Step forward to play them.` });
    } catch (cause) {
      setRunNote({ text: `${name} could not be played: ${cause instanceof Error ? cause.message : String(cause)}`, error: true });
    }
  };

  const copyLink = async () => {
    const inputs = sim.history.slice(1, sim.cursor + 1).flatMap((entry) => (entry.input ? [entry.input] : []));
    const url = new URL(window.location.href);
    url.searchParams.set("trace", encodeTrace(inputs));
    try {
      await navigator.clipboard.writeText(url.toString());
      setRunNote({ text: "Link to this run copied." });
    } catch {
      // Clipboard access can be refused (e.g. plain http on a clubroom PC): show the link instead.
      setRunNote({ text: url.toString() });
    }
  };

  const current = sim.current;
  const shown = rulebook && current ? shownAspects(rulebook, current.state) : {};
  const pulsedDetector = current?.input?.type === "pulse" ? current.input.detector : undefined;
  // Only counterexample playback knows where trains are; a hand-made run has pulses only.
  const trains = current?.trains && rulebook ? placeTrains(current.trains, rulebook.proving?.routes ?? []) : undefined;

  return (
    <div className="space-y-6">
      <div className="flex flex-wrap items-end justify-between gap-3">
        <h1 className="text-2xl font-bold">Simulator — {layout.data.name}</h1>
        <div className="flex flex-wrap items-center gap-2 text-sm">
          <label htmlFor="sim-source" className="font-semibold text-ink-soft">
            Rulebook
          </label>
          <select
            id="sim-source"
            value={source === undefined ? "" : String(source)}
            onChange={(e) => chooseSource(e.target.value)}
            className="rounded-md border border-panel-600 bg-panel-950 px-2 py-1.5 text-ink"
          >
            {storedDraft ? <option value={DRAFT}>Unsaved draft from the editor (based on v{storedDraft.basedOn ?? "?"})</option> : null}
            {versions.map((v) => (
              <option key={v.version} value={v.version}>
                v{v.version} — {v.status}
                {v.live ? ", live" : ""}
              </option>
            ))}
          </select>
        </div>
      </div>
      <p className="text-sm text-ink-soft">
        The simulator runs the same engine as the live control room, here in your browser. Nothing is sent to the layout.
      </p>

      {source === undefined ? <p className="text-ink-faint">This layout has no rulebook to simulate.</p> : null}
      {source === DRAFT && draft && !draft.ok ? <ErrorList errors={draft.errors} title="The unsaved draft has problems; fix them in the rulebook editor" /> : null}
      {typeof source === "number" && stored.isPending ? <Loading what={`rulebook version ${source}`} /> : null}
      {typeof source === "number" && stored.isError ? <LoadError error={stored.error} what={`rulebook version ${source}`} /> : null}
      {runNote ? (
        <p role={runNote.error ? "alert" : "status"} className={`break-all text-sm ${runNote.error ? "text-notice-error" : "text-notice-ok"}`}>
          {runNote.text}
        </p>
      ) : null}

      {rulebook && current ? (
        <div className="grid gap-6 xl:grid-cols-[minmax(0,3fr)_minmax(0,2fr)]">
          <div className="space-y-6">
            <Panel title="Signals and detectors">
              <Mimic
                title={layout.data.name}
                layout={layout.data}
                state={{ shown, counters: current.state.counters, selectors: current.state.selectors, held: current.state.held, points: current.state.points }}
                routes={rulebook.proving?.routes}
                pulses={pulsedDetector ? { [pulsedDetector]: sim.cursor } : undefined}
                lastPulsed={pulsedDetector}
                trains={trains}
              />
              {trains ? (
                <ul className="mt-3 space-y-1 text-sm" aria-label="Trains in this counterexample">
                  {trains.length === 0 ? <li className="text-ink-faint">No train has arrived yet.</li> : null}
                  {trains.map((t) => (
                    <li key={t.train}>{t.words}</li>
                  ))}
                </ul>
              ) : null}
            </Panel>
            <Panel title="Inputs">
              <SimControls layout={layout.data} state={current.state} onInput={sim.apply} />
            </Panel>
            <Panel title="State">
              <StateView state={current.state} />
            </Panel>
            <Panel title="Why each signal shows what it shows">
              <WhyPanel signals={layout.data.signals} shown={shown} history={sim.history} cursor={sim.cursor} />
            </Panel>
          </div>
          <div className="space-y-6">
            <Panel
              title={`History — step ${sim.cursor} of ${sim.history.length - 1}`}
              actions={
                <>
                  <Button onClick={() => sim.goto(0)} disabled={sim.cursor === 0}>
                    To start
                  </Button>
                  <Button onClick={() => sim.goto(sim.cursor - 1)} disabled={sim.cursor === 0}>
                    Step back
                  </Button>
                  <Button onClick={() => sim.goto(sim.cursor + 1)} disabled={sim.cursor >= sim.history.length - 1}>
                    Step forward
                  </Button>
                  <Button onClick={() => sim.goto(sim.history.length - 1)} disabled={sim.cursor >= sim.history.length - 1}>
                    To latest
                  </Button>
                </>
              }
            >
              <ChangeLog history={sim.history} cursor={sim.cursor} onGoto={sim.goto} />
            </Panel>
            <Panel title="Load or share a run">
              <div className="space-y-4">
                <InputLoader onLoad={loadList} />
                <div className="flex flex-wrap gap-2">
                  <Button onClick={copyLink} disabled={sim.cursor === 0}>
                    Copy a link to this run
                  </Button>
                  <Button onClick={() => rulebook && (reset(rulebook), setRunNote(null))}>Start over</Button>
                </div>
              </div>
            </Panel>
          </div>
        </div>
      ) : null}
    </div>
  );
}
