import { useQueryClient, type QueryClient } from "@tanstack/react-query";
import { useEffect } from "react";
import type { AlarmDto, LiveState, LiveUpdate } from "@shared/contract/live";
import { alarmKeys } from "../api/alarms";
import { liveKeys, TICKER_LENGTH, type ConnectionInfo, type ConnectionStatus, type TickerEntry } from "../api/live";
import { acquireLiveSocket, JoinError, joinLive, leaveLive, releaseLiveSocket } from "../api/socket";

/** After a failed join, try again this much later (the socket's own reconnection covers drops). */
const REJOIN_DELAY_MS = 2_000;
/**
 * Pushes are applied at once when they come one by one, and at most once per this interval
 * when they crowd in, so the page renders about once per display frame.
 */
const MIN_FLUSH_INTERVAL_MS = 16;

/**
 * Joins a layout's live room and keeps the TanStack Query cache current: the live state
 * (`liveKeys.state`), the event ticker, per-detector pulse counts and the connection status.
 * No second store: components read those cache entries with the hooks in api/live.ts.
 *
 * A push carries one commit batch of steps, numbered `from` … `version` per layout. Pushes are
 * applied in order (at most one render per MIN_FLUSH_INTERVAL_MS under a burst); a gap
 * (a missed push) or a reconnect asks for the whole state again with a fresh `live:join`.
 */
export function useLiveLayout(slug: string | undefined, options: { displayToken?: string } = {}): void {
  const queryClient = useQueryClient();
  const { displayToken } = options;

  useEffect(() => {
    if (!slug) return;
    const socket = acquireLiveSocket();
    let stopped = false;
    let joining = false;
    let rejoinTimer: ReturnType<typeof setTimeout> | undefined;
    let pending: LiveUpdate[] = [];
    let flushTimer: ReturnType<typeof setTimeout> | undefined;
    let lastFlushAt = 0;

    const setConnection = (status: ConnectionStatus, message?: string) => {
      const current = queryClient.getQueryData<ConnectionInfo>(liveKeys.connection(slug));
      if (current?.status === status && current.message === message) return;
      queryClient.setQueryData<ConnectionInfo>(liveKeys.connection(slug), { status, since: Date.now(), message });
    };

    const join = async (status: ConnectionStatus) => {
      if (joining || stopped) return;
      joining = true;
      setConnection(status);
      try {
        const state = await joinLive(slug, displayToken);
        if (stopped) return;
        const current = queryClient.getQueryData<LiveState>(liveKeys.state(slug));
        // A newer state may already have been pieced together from pushes: keep the newer.
        if (!current || current.version <= state.version) queryClient.setQueryData(liveKeys.state(slug), state);
        joining = false;
        setConnection("live");
        flush();
      } catch (error) {
        joining = false;
        if (stopped) return;
        if (error instanceof JoinError && error.code !== "timeout") {
          setConnection("refused", error.message);
        } else {
          setConnection("reconnecting", error instanceof Error ? error.message : String(error));
        }
        rejoinTimer = setTimeout(() => socket.connected && void join("catching-up"), REJOIN_DELAY_MS);
      }
    };

    const flush = () => {
      clearTimeout(flushTimer);
      flushTimer = undefined;
      if (joining || stopped || pending.length === 0) return;
      lastFlushAt = performance.now();
      const batch = pending;
      pending = [];
      applyBatch(queryClient, slug, batch, () => void join("catching-up"));
    };

    const schedule = () => {
      if (flushTimer !== undefined) return;
      flushTimer = setTimeout(flush, Math.max(0, lastFlushAt + MIN_FLUSH_INTERVAL_MS - performance.now()));
    };

    const onUpdate = (update: LiveUpdate) => {
      if (update.slug !== slug) return;
      pending.push(update);
      schedule();
    };
    const onState = (state: LiveState) => {
      if (state.slug !== slug) return;
      const current = queryClient.getQueryData<LiveState>(liveKeys.state(slug));
      if (!current || current.version <= state.version) queryClient.setQueryData(liveKeys.state(slug), state);
    };
    const onAlarm = (alarm: AlarmDto & { slug: string }) => {
      if (alarm.slug !== slug) return;
      const { slug: _slug, ...dto } = alarm;
      queryClient.setQueryData<LiveState>(liveKeys.state(slug), (state) => (state ? { ...state, alarms: mergeAlarm(state.alarms, dto) } : state));
      void queryClient.invalidateQueries({ queryKey: alarmKeys.all });
    };
    const onConnect = () => void join("catching-up");
    let reconnectTimer: ReturnType<typeof setTimeout> | undefined;
    const onDisconnect = (reason: string) => {
      setConnection("reconnecting");
      // socket.io only reconnects by itself after a lost connection; when the server closed
      // it (e.g. a revoked display link) ask again, and the join answers whether we may.
      if (reason === "io server disconnect") reconnectTimer = setTimeout(() => !stopped && socket.connect(), REJOIN_DELAY_MS);
    };
    const onConnectError = (err: Error) => setConnection("reconnecting", err.message);

    socket.on("live:update", onUpdate);
    socket.on("live:state", onState);
    socket.on("alarm:changed", onAlarm);
    socket.on("connect", onConnect);
    socket.on("disconnect", onDisconnect);
    socket.on("connect_error", onConnectError);
    if (socket.connected) void join("connecting");
    else setConnection("connecting");

    return () => {
      stopped = true;
      clearTimeout(flushTimer);
      clearTimeout(rejoinTimer);
      clearTimeout(reconnectTimer);
      socket.off("live:update", onUpdate);
      socket.off("live:state", onState);
      socket.off("alarm:changed", onAlarm);
      socket.off("connect", onConnect);
      socket.off("disconnect", onDisconnect);
      socket.off("connect_error", onConnectError);
      leaveLive(slug);
      releaseLiveSocket();
    };
  }, [slug, displayToken, queryClient]);
}

export function mergeAlarm(alarms: AlarmDto[], alarm: AlarmDto): AlarmDto[] {
  const index = alarms.findIndex((a) => a.id === alarm.id);
  if (index === -1) return [alarm, ...alarms];
  const next = alarms.slice();
  next[index] = alarm;
  return next;
}

/**
 * Applies pushes in version order to the cached state. A push carries one commit batch: its
 * steps `from` … `version` and the batch's patch (each field's value after the batch). Stops
 * at the first gap and asks for a re-join; steps at or below the cached version are already in
 * it and are skipped (a push wholly below it is skipped as a whole).
 */
export function applyBatch(queryClient: QueryClient, slug: string, batch: LiveUpdate[], onGap: () => void): void {
  let state = queryClient.getQueryData<LiveState>(liveKeys.state(slug));
  if (!state) {
    onGap();
    return;
  }
  const pulses = { ...(queryClient.getQueryData<Record<string, number>>(liveKeys.pulses(slug)) ?? {}) };
  const entries: TickerEntry[] = [];
  let pulsed = false;
  for (const update of batch) {
    if (update.version <= state.version) continue;
    if (update.from > state.version + 1) {
      onGap();
      break;
    }
    const known = state.version;
    state = { ...state, ...update.patch, version: update.version };
    for (const step of update.steps) {
      if (step.version <= known) continue;
      const event = step.event;
      if (event?.kind === "pulse" && event.status === "accepted" && event.detector) {
        pulses[event.detector] = (pulses[event.detector] ?? 0) + 1;
        pulsed = true;
      }
      entries.push(step);
    }
  }
  queryClient.setQueryData(liveKeys.state(slug), state);
  if (pulsed) queryClient.setQueryData(liveKeys.pulses(slug), pulses);
  if (entries.length > 0) {
    // The ticker keeps the newest TICKER_LENGTH steps, newest first.
    const newest = entries.slice(-TICKER_LENGTH).reverse();
    queryClient.setQueryData<TickerEntry[]>(liveKeys.ticker(slug), (old = []) => [...newest, ...old].slice(0, TICKER_LENGTH));
  }
}
