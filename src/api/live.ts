import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { CommandBody, LiveState, LiveStep } from "@shared/contract/live";
import type { SessionControlBody } from "@shared/contract/restMap";
import { api } from "./client";

/** What the socket is doing for one layout, as shown by the connection indicator. */
export type ConnectionStatus = "connecting" | "live" | "catching-up" | "reconnecting" | "refused";
export interface ConnectionInfo {
  status: ConnectionStatus;
  /** When the status last changed (ms since epoch). */
  since: number;
  message?: string;
}

/** One line of the event ticker: one pushed step. */
export type TickerEntry = LiveStep;
export const TICKER_LENGTH = 80;

export const liveKeys = {
  all: ["live"] as const,
  state: (slug: string) => ["live", slug, "state"] as const,
  ticker: (slug: string) => ["live", slug, "ticker"] as const,
  pulses: (slug: string) => ["live", slug, "pulses"] as const,
  connection: (slug: string) => ["live", slug, "connection"] as const,
  display: (token: string) => ["display", token] as const,
};

/**
 * The layout's live state. The socket hook (useLiveLayout) keeps it current by writing
 * pushes into this cache entry; the REST fetch is only the first answer.
 */
export function useLiveState(slug: string | undefined, displayToken?: string) {
  const queryClient = useQueryClient();
  return useQuery({
    queryKey: liveKeys.state(slug ?? ""),
    queryFn: async ({ signal }) => {
      const fetched = await api("GET /api/layouts/:slug/live", { slug: slug ?? "", query: { display: displayToken || undefined }, signal });
      // The socket may have written a newer state while this request was in flight.
      const current = queryClient.getQueryData<LiveState>(liveKeys.state(slug ?? ""));
      return current && current.version > fetched.version ? current : fetched;
    },
    enabled: Boolean(slug),
    staleTime: Infinity,
  });
}

/** A value only ever written with setQueryData (ticker, pulses, connection): no fetching. */
function useCacheOnly<T>(key: readonly unknown[], fallback: T): T {
  const query = useQuery<T>({ queryKey: key, queryFn: () => fallback, enabled: false, staleTime: Infinity });
  return query.data ?? fallback;
}

const NO_TICKER: TickerEntry[] = [];
const NO_PULSES: Record<string, number> = {};
const CONNECTING: ConnectionInfo = { status: "connecting", since: 0 };

export const useTicker = (slug: string) => useCacheOnly(liveKeys.ticker(slug), NO_TICKER);
export const usePulses = (slug: string) => useCacheOnly(liveKeys.pulses(slug), NO_PULSES);
export const useConnection = (slug: string) => useCacheOnly(liveKeys.connection(slug), CONNECTING);

export function useCommandMutation(slug: string) {
  return useMutation({
    mutationFn: (body: CommandBody) => api("POST /api/layouts/:slug/commands", { slug, body }),
  });
}

/** What a display link opens (no sign-in). */
export function useDisplay(token: string | undefined) {
  return useQuery({
    queryKey: liveKeys.display(token ?? ""),
    queryFn: ({ signal }) => api("GET /api/display/:token", { token: token ?? "", signal }),
    select: (body) => body.layout,
    enabled: Boolean(token),
    staleTime: Infinity,
    retry: 3,
  });
}

/** Starts or ends the running day (signaller, admin), with an optional note; the live state and session list follow. */
export function useSessionControlMutation(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: SessionControlBody) => api("POST /api/layouts/:slug/sessions", { slug, body }),
    onSuccess: (state) => {
      const current = queryClient.getQueryData<LiveState>(liveKeys.state(slug));
      if (!current || current.version <= state.version) queryClient.setQueryData(liveKeys.state(slug), state);
      void queryClient.invalidateQueries({ queryKey: ["sessions", "list", slug] });
    },
  });
}
