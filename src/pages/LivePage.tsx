import { useCallback, useMemo, useState } from "react";
import { Link, useParams } from "react-router-dom";
import type { CommandBody } from "@shared/contract/live";
import { ApiError } from "../api/http";
import { useLayout } from "../api/layouts";
import { useCommandMutation, useConnection, useLiveState, usePulses, useTicker } from "../api/live";
import { useRulebookVersion } from "../api/rulebooks";
import { AlarmBanner } from "../components/live/AlarmBanner";
import { CommandDialog, type CommandDraft } from "../components/live/CommandDialog";
import { ConnectionIndicator } from "../components/live/ConnectionIndicator";
import { LayoutStatusBadge } from "../components/live/LayoutStatusBadge";
import { EventTicker } from "../components/live/EventTicker";
import { NodeStrip } from "../components/live/NodeStrip";
import { StatePanel } from "../components/live/StatePanel";
import { SessionControl } from "../components/live/SessionControl";
import { WhyAtDanger } from "../components/live/WhyAtDanger";
import { Mimic } from "../components/mimic/Mimic";
import { MimicLegend } from "../components/mimic/MimicLegend";
import { Button } from "../components/ui/Button";
import { Panel } from "../components/ui/Panel";
import { SafetyNote } from "../components/ui/SafetyNote";
import { LoadError, Loading } from "../components/ui/Status";
import { useCurrentUser } from "../hooks/useCurrentUser";
import { useLiveLayout } from "../hooks/useLiveLayout";
import { useNow } from "../hooks/useNow";
import { useThrottledValue } from "../hooks/useThrottledValue";
import { useTickerHistory } from "../hooks/useTickerHistory";

/** The state table and the ticker are read, not watched: they follow at most this often. */
const PANEL_REFRESH_MS = 250;
import { drawnAspects, layoutStatus } from "../lib/liveStatus";
import { can } from "../lib/permissions";
import { paths } from "../lib/paths";

/** The control room: mimic, state, events, nodes, alarms and (for signallers) commands. */
export default function LivePage() {
  const { slug = "" } = useParams();
  const user = useCurrentUser();
  const layout = useLayout(slug);
  const live = useLiveState(slug);
  useLiveLayout(slug);
  const connection = useConnection(slug);
  const ticker = useTicker(slug);
  useTickerHistory(slug, live.data?.session?.id);
  const pulses = usePulses(slug);
  const rulebook = useRulebookVersion(slug, live.data?.rulebookVersion ?? undefined);
  const now = useNow();
  const command = useCommandMutation(slug);
  const [draft, setDraft] = useState<CommandDraft | null>(null);
  const [notice, setNotice] = useState<string | null>(null);
  const canControl = can.controlLive(user.role);
  const panelState = useThrottledValue(live.data, PANEL_REFRESH_MS);
  const panelTicker = useThrottledValue(ticker, PANEL_REFRESH_MS);

  const routes = rulebook.data?.rulebook.proving?.routes;
  const layoutData = layout.data;
  const liveData = live.data;
  // Signals of offline boards are drawn dark: the mimic shows what can be known, not what was asked.
  const mimicState = useMemo(() => (liveData && layoutData ? { ...liveData, shown: drawnAspects(liveData, layoutData.nodes) } : undefined), [liveData, layoutData]);
  const mimicLayout = useMemo(() => layout.data, [layout.data]);
  const resetCommand = command.reset;
  const onCommand = useCallback(
    (c: CommandDraft) => {
      resetCommand();
      setDraft(c);
    },
    [resetCommand],
  );

  if (layout.isPending || (live.isPending && !live.isError)) return <Loading what="the live layout" />;
  if (layout.isError) return <LoadError error={layout.error} what="the layout" />;
  if (live.isError || !live.data || !mimicLayout || !mimicState) return <LoadError error={live.error} what="the live state" />;
  const state = live.data;
  const status = layoutStatus(state, mimicLayout.nodes);

  const send = (body: CommandBody) =>
    command.mutate(body, {
      onSuccess: () => {
        setDraft(null);
        setNotice(`Done: ${body.type}${"signal" in body ? ` ${body.signal}` : "latch" in body ? ` ${body.latch}` : "counter" in body ? ` ${body.counter}` : ""}.`);
      },
    });

  return (
    <div className="space-y-4" data-live-version={state.version}>
      <div className="flex flex-wrap items-center justify-between gap-3">
        <div>
          <h1 className="text-2xl font-bold">{mimicLayout.name}</h1>
          <p className="text-sm text-ink-soft">
            Live control room
            {state.rulebookVersion ? ` · rulebook version ${state.rulebookVersion}` : " · no rulebook running"}
            {state.session ? ` · session ${state.session.id}` : ""}
          </p>
        </div>
        <div className="flex flex-wrap items-center gap-3">
          <LayoutStatusBadge status={status} />
          <ConnectionIndicator connection={connection} />
          <Link to={paths.alarms({ slug })} className="rounded-md border border-panel-600 px-3 py-1.5 text-sm hover:bg-panel-800">
            Alarms
          </Link>
          <Link to={paths.audit({ slug })} className="rounded-md border border-panel-600 px-3 py-1.5 text-sm hover:bg-panel-800">
            Audit log
          </Link>
          {user.role === "admin" ? (
            <Link to={paths.displayLinks({ slug })} className="rounded-md border border-panel-600 px-3 py-1.5 text-sm hover:bg-panel-800">
              Display links
            </Link>
          ) : null}
        </div>
      </div>

      <AlarmBanner slug={slug} state={state} />
      {notice ? (
        <p role="status" className="text-sm text-notice-ok">
          {notice}
        </p>
      ) : null}

      <Mimic title={mimicLayout.name} layout={mimicLayout} state={mimicState} routes={routes} pulses={pulses} className="border border-panel-700 [contain:layout_paint] will-change-transform" />
      <MimicLegend className="text-sm text-ink-soft" />

      <Panel title="Why at danger">
        <WhyAtDanger rulebook={rulebook.data?.rulebook} state={panelState ?? state} signals={mimicLayout.signals} onCommand={canControl ? onCommand : undefined} />
      </Panel>

      <Panel title="Running day">
        <SessionControl slug={slug} session={state.session} canControl={canControl} />
      </Panel>

      <Panel title="Nodes">
        <NodeStrip nodes={mimicLayout.nodes} live={state.nodes} now={now} />
      </Panel>

      <div className="grid gap-4 lg:grid-cols-2">
        <Panel
          title="State"
          className="[contain:layout_paint]"
          actions={
            canControl ? (
              <Button tone="danger" className="px-2 py-0.5 text-xs" onClick={() => onCommand({ type: "restart" })}>
                Restart rulebook…
              </Button>
            ) : null
          }
        >
          <StatePanel state={panelState ?? state} signals={mimicLayout.signals} nodes={mimicLayout.nodes} now={now} onCommand={canControl ? onCommand : undefined} />
        </Panel>
        <Panel title="Events" className="[contain:layout_paint]">
          <EventTicker entries={panelTicker} />
        </Panel>
      </div>

      <SafetyNote />

      {draft ? (
        <CommandDialog
          command={draft}
          busy={command.isPending}
          error={command.error ? (command.error instanceof ApiError ? command.error.message : String(command.error)) : null}
          onSend={send}
          onCancel={() => setDraft(null)}
        />
      ) : null}
    </div>
  );
}
