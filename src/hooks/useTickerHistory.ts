import { useQuery, useQueryClient } from "@tanstack/react-query";
import { useEffect } from "react";
import { liveKeys, TICKER_LENGTH, type TickerEntry } from "../api/live";
import { api } from "../api/client";
import { sessionKeys } from "../api/sessions";

/**
 * Fills the live ticker with the session's latest events when the page opens, so a signaller
 * arriving mid-day sees what happened, not "waiting for the first event". Pushes that came
 * in meanwhile stay first (they are newer); an event already there is not repeated.
 */
export function useTickerHistory(slug: string, sessionId: number | undefined): void {
  const queryClient = useQueryClient();
  const history = useQuery({
    queryKey: [...sessionKeys.all, sessionId ?? 0, "tail", TICKER_LENGTH] as const,
    queryFn: ({ signal }) => api("GET /api/sessions/:id/events", { id: sessionId ?? 0, query: { format: "json", tail: TICKER_LENGTH }, signal }),
    enabled: typeof sessionId === "number" && sessionId > 0,
    staleTime: Infinity,
  });
  const events = history.data?.events;
  useEffect(() => {
    if (!events) return;
    queryClient.setQueryData<TickerEntry[]>(liveKeys.ticker(slug), (old = []) => {
      const seen = new Set(old.map((e) => e.event?.id).filter(Boolean));
      // Negative versions: older than any push, and unique keys for the rows.
      const past = [...events]
        .reverse()
        .filter((e) => !seen.has(e.id))
        .map((e, i): TickerEntry => ({ version: -1 - i, event: e, changes: e.changes }));
      return [...old, ...past].slice(0, TICKER_LENGTH);
    });
  }, [events, queryClient, slug]);
}
