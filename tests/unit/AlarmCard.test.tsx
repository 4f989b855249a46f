// @vitest-environment happy-dom
import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import { cleanup, render, screen } from "@testing-library/react";
import { MemoryRouter } from "react-router-dom";
import { afterEach, describe, expect, it } from "vitest";
import type { AlarmDto } from "@shared/contract/live";
import { AlarmCard } from "../../src/components/alarms/AlarmCard";
import { formatDateTimeSeconds } from "../../src/lib/format";

afterEach(cleanup);

const chatter: AlarmDto = {
  id: 12,
  kind: "chatter",
  subject: "MA",
  message: "detector MA gave 9 pulses in 2 s",
  raisedAt: "2026-05-02T10:15:03.120Z",
  lastSeenAt: "2026-05-02T10:17:42.900Z",
  occurrences: 4,
  acknowledgedAt: null,
  acknowledgedBy: null,
  comment: null,
  clearedAt: null,
  sessionId: 3,
  eventId: "41",
};

function renderCard(alarm: AlarmDto) {
  render(
    <QueryClientProvider client={new QueryClient()}>
      <MemoryRouter>
        <AlarmCard slug="kestrel-bank" alarm={alarm} canAcknowledge={false} />
      </MemoryRouter>
    </QueryClientProvider>,
  );
  return document.querySelector("[data-occurrences]")!;
}

describe("AlarmCard", () => {
  it.each([
    { occurrences: 4, words: "Happened 4 times" },
    { occurrences: 1, words: "Happened once" },
    { occurrences: 1250, words: "Happened 1,250 times" },
  ])("says how often a grouped alarm happened ($occurrences) and when it was last seen, to the second", ({ occurrences, words }) => {
    const line = renderCard({ ...chatter, occurrences });
    expect(line.getAttribute("data-occurrences")).toBe(String(occurrences));
    expect(line.textContent).toContain(words);
    const last = line.querySelector("time")!;
    expect(last.getAttribute("datetime")).toBe(chatter.lastSeenAt);
    expect(last.textContent).toBe(formatDateTimeSeconds(chatter.lastSeenAt));
    expect(last.textContent).toMatch(/\d{2}:\d{2}:\d{2}/);
  });

  it("gives the raise, clear and acknowledgement times with seconds, and links to the raising event", () => {
    renderCard({ ...chatter, clearedAt: "2026-05-02T10:20:00.000Z", acknowledgedAt: "2026-05-02T10:18:05.000Z", acknowledgedBy: "Fernmoor Signaller" });
    const times = [...document.querySelectorAll("time")].map((t) => t.getAttribute("datetime"));
    expect(times).toEqual([chatter.lastSeenAt, chatter.raisedAt, "2026-05-02T10:20:00.000Z", "2026-05-02T10:18:05.000Z"]);
    expect(screen.getByRole("link", { name: "Event #41 in the log" }).getAttribute("href")).toBe("/layouts/kestrel-bank/sessions?session=3&event=41");
  });
});
