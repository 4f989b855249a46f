import { useEffect, useMemo, useState } from "react";
import { Link, useParams, useSearchParams } from "react-router-dom";
import { shownAspects } from "@shared/rulebook/engine";
import type { Rulebook } from "@shared/rulebook/schema";
import { useLayout } from "../api/layouts";
import { useRulebookVersion } from "../api/rulebooks";
import { useSessionInputs, useSessions } from "../api/sessions";
import { Mimic } from "../components/mimic/Mimic";
import { ReplayControls } from "../components/replay/ReplayControls";
import { WhatIfPanel, type WhatIfOption } from "../components/replay/WhatIfPanel";
import { ChangeLog } from "../components/simulator/ChangeLog";
import { WhyPanel } from "../components/simulator/WhyPanel";
import { ErrorList } from "../components/ui/ErrorList";
import { Panel } from "../components/ui/Panel";
import { LoadError, Loading } from "../components/ui/Status";
import { useDraftRulebook } from "../hooks/useDraftRulebook";
import { usePlayback } from "../hooks/usePlayback";
import { useSimulation } from "../hooks/useSimulation";
import { carryStartState, compareRuns, runSession } from "../lib/replay";
import type { SimEntry } from "../lib/simulation";
import { paths } from "../lib/paths";

const DRAFT = "draft";
/** Steps of the change log drawn either side of the cursor. */
const CHANGE_LOG_AROUND = 40;

export default function ReplayPage() {
  const { slug = "", id = "" } = useParams();
  const sessionId = Number(id);
  const [search, setSearch] = useSearchParams();
  const layout = useLayout(slug);
  const session = useSessionInputs(Number.isInteger(sessionId) && sessionId > 0 ? sessionId : undefined);
  const importedFrom = useSessions(slug).data?.find((s) => s.id === sessionId)?.importedFrom;
  const recordedVersion = session.data?.rulebookVersion ?? undefined;
  const recordedRulebook = useRulebookVersion(slug, recordedVersion);

  const whatIf = search.get("whatif") ?? "";
  const { stored: storedDraft, draft } = useDraftRulebook(slug, layout.data, whatIf === DRAFT);
  const whatIfVersion = whatIf && whatIf !== DRAFT ? Number(whatIf) : undefined;
  const storedWhatIf = useRulebookVersion(slug, whatIfVersion);
  const whatIfRulebook: Rulebook | undefined = whatIf === DRAFT ? (draft?.ok ? draft.rulebook : undefined) : storedWhatIf.data?.rulebook;

  const sim = useSimulation();
  const { reset, goto } = sim;
  const rulebook = recordedRulebook.data?.rulebook;
  const recorded = useMemo(() => (rulebook && session.data ? runSession(rulebook, session.data.start, session.data.inputs, session.data.eventIds) : null), [rulebook, session.data]);
  // `?step=N` (e.g. from a priority check in the report) opens the replay at that moment.
  const [openingStep] = useState(() => Math.max(0, Math.floor(Number(search.get("step")) || 0)));
  useEffect(() => {
    if (rulebook && recorded) reset(rulebook, recorded, openingStep);
  }, [rulebook, recorded, reset, openingStep]);

  const whatIfRun = useMemo<SimEntry[] | null>(
    () => (whatIfRulebook && session.data ? runSession(whatIfRulebook, carryStartState(whatIfRulebook, session.data.start), session.data.inputs) : null),
    [whatIfRulebook, session.data],
  );
  const comparison = useMemo(
    () => (rulebook && recorded && whatIfRulebook && whatIfRun ? compareRuns(rulebook, recorded, whatIfRulebook, whatIfRun) : null),
    [rulebook, recorded, whatIfRulebook, whatIfRun],
  );
  const playback = usePlayback(sim.history, sim.cursor, goto);

  if (layout.isPending || session.isPending) return <Loading what="the session" />;
  if (layout.isError) return <LoadError error={layout.error} what="the layout" />;
  if (session.isError) return <LoadError error={session.error} what={`session #${id}`} />;
  if (recordedRulebook.isError) return <LoadError error={recordedRulebook.error} what={`rulebook version ${recordedVersion}`} />;

  const options: WhatIfOption[] = [
    ...(storedDraft ? [{ value: DRAFT, label: `Unsaved draft from the editor (based on v${storedDraft.basedOn ?? "?"})` }] : []),
    ...[...layout.data.versions]
      .sort((a, b) => b.version - a.version)
      .filter((v) => v.version !== recordedVersion)
      .map((v) => ({ value: String(v.version), label: `v${v.version} — ${v.status}${v.live ? ", live" : ""}` })),
  ];
  const chooseWhatIf = (value: string) => {
    const next = new URLSearchParams(search);
    if (value) next.set("whatif", value);
    else next.delete("whatif");
    setSearch(next, { replace: true });
  };

  const current = sim.current;
  const ready = rulebook && current && sim.history === recorded;
  const shown = ready ? shownAspects(rulebook, current.state) : {};
  const pulsed = current?.input?.type === "pulse" ? current.input.detector : undefined;
  const pulses = pulsed ? { [pulsed]: sim.cursor } : undefined;
  const whatIfEntry = whatIfRun?.[sim.cursor];
  const steps = sim.history.length - 1;
  const switches = session.data.rulebookSwitches;

  return (
    <div className="space-y-6">
      <div className="flex flex-wrap items-baseline justify-between gap-3">
        <h1 className="text-2xl font-bold">
          Replay of session #{sessionId} — {layout.data.name}
        </h1>
        <Link to={paths.sessions({ slug }, { query: { session: sessionId } })} className="text-sm text-brass hover:underline">
          Back to the event log
        </Link>
      </div>
      <p className="text-sm text-ink-soft">
        The session&apos;s {session.data.inputs.length.toLocaleString("en-GB")} accepted pulses, clock ticks and signaller commands run again through rulebook v
        {recordedVersion ?? "?"} in your browser, on the same engine as the live control room. Nothing is sent to the layout.
      </p>
      {importedFrom ? (
        <p role="note" className="rounded-md border border-panel-600 p-3 text-sm text-ink-soft">
          Imported from {importedFrom}: the file brought its inputs only, so every change below is this replay&apos;s, from the rulebook&apos;s initial values — the same
          changes the event log lists.
        </p>
      ) : null}
      {switches.length > 0 ? (
        <p role="note" className="rounded-md border border-aspect-caution/60 p-3 text-sm text-aspect-caution">
          A new rulebook (v{switches.join(", v")}) went live during this session; the live layout restarted from its initial values then. This replay runs the whole
          session on v{recordedVersion}, so steps after that point show what v{recordedVersion} would have done.
        </p>
      ) : null}
      {!ready ? <Loading what={`rulebook version ${recordedVersion ?? ""}`} /> : null}

      {ready ? (
        <div className="grid gap-6 xl:grid-cols-[minmax(0,3fr)_minmax(0,2fr)]">
          <div className="space-y-6">
            <Panel title="Playback">
              <ReplayControls
                cursor={sim.cursor}
                last={steps}
                goto={goto}
                playing={playback.playing}
                onPlay={playback.play}
                onPause={playback.pause}
                speed={playback.speed}
                onSpeed={playback.setSpeed}
                label={current.label}
              />
            </Panel>
            <Panel title={`Recorded run — rulebook v${recordedVersion}`}>
              <Mimic
                title={`${layout.data.name}, recorded`}
                layout={layout.data}
                state={{ shown, counters: current.state.counters, selectors: current.state.selectors, held: current.state.held }}
                routes={rulebook.proving?.routes}
                pulses={pulses}
                lastPulsed={pulsed}
              />
            </Panel>
            {whatIfRulebook && whatIfEntry ? (
              <Panel title={`What-if run — ${whatIf === DRAFT ? "unsaved draft" : `rulebook v${whatIf}`}`}>
                <Mimic
                  title={`${layout.data.name}, what-if`}
                  layout={layout.data}
                  state={{
                    shown: shownAspects(whatIfRulebook, whatIfEntry.state),
                    counters: whatIfEntry.state.counters,
                    selectors: whatIfEntry.state.selectors,
                    held: whatIfEntry.state.held,
                  }}
                  routes={whatIfRulebook.proving?.routes}
                  pulses={pulses}
                  lastPulsed={pulsed}
                />
              </Panel>
            ) : null}
            <Panel title="Why each signal shows what it shows">
              <WhyPanel signals={layout.data.signals} shown={shown} history={sim.history} cursor={sim.cursor} />
            </Panel>
          </div>
          <div className="space-y-6">
            <Panel title="What-if">
              {whatIf === DRAFT && draft && !draft.ok ? <ErrorList errors={draft.errors} title="The unsaved draft has problems; fix them in the rulebook editor" /> : null}
              {whatIfVersion !== undefined && storedWhatIf.isError ? <LoadError error={storedWhatIf.error} what={`rulebook version ${whatIfVersion}`} /> : null}
              <WhatIfPanel options={options} chosen={whatIf} onChoose={chooseWhatIf} comparison={comparison} cursor={sim.cursor} goto={goto} steps={steps} />
            </Panel>
            <Panel title={`Change log — step ${sim.cursor} of ${steps}`}>
              <ChangeLog
                history={sim.history}
                cursor={sim.cursor}
                onGoto={goto}
                around={CHANGE_LOG_AROUND}
                note={(index) => {
                  const diffs = comparison?.differences.get(index);
                  if (!diffs) return null;
                  return (
                    <p className="mt-1 text-xs font-semibold text-aspect-caution">
                      What-if differs: {diffs.map((d) => `${d.signal} ${d.recorded} → ${d.whatIf}`).join(", ")}
                    </p>
                  );
                }}
              />
            </Panel>
          </div>
        </div>
      ) : null}
    </div>
  );
}
