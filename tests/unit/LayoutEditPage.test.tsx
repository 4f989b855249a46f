// @vitest-environment happy-dom
import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import { cleanup, fireEvent, render, screen, waitFor } from "@testing-library/react";
import { MemoryRouter, Route, Routes } from "react-router-dom";
import { afterEach, describe, expect, it, vi } from "vitest";
import type { LayoutDetail } from "@shared/contract/rest";
import { kestrelBankLayout } from "@shared/demo/fernmoor";
import { authKeys } from "../../src/api/auth";
import LayoutEditPage from "../../src/pages/LayoutEditPage";

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

const file = kestrelBankLayout();
const detail = (revision: number): LayoutDetail => ({
  ...file,
  schematic: file.schematic ?? null,
  versions: [],
  revision,
  liveVersion: 1,
  archivedAt: null,
  nodes: file.nodes.map((n) => ({ ...n, points: n.points ?? [] })),
});

function renderPage(putReply: { status: number; body: unknown }) {
  let revision = 3;
  const calls: { method: string; url: string; body: unknown }[] = [];
  vi.stubGlobal(
    "fetch",
    vi.fn(async (url: string, init: RequestInit) => {
      const method = init.method ?? "GET";
      calls.push({ method, url, body: init.body ? JSON.parse(String(init.body)) : undefined });
      const reply = method === "PUT" ? putReply : { status: 200, body: { layout: detail(revision) } };
      if (method === "PUT") revision = 4; // what the other engineer's save left behind
      return new Response(JSON.stringify(reply.body), { status: reply.status, headers: { "Content-Type": "application/json" } });
    }),
  );
  const client = new QueryClient({ defaultOptions: { queries: { retry: false }, mutations: { retry: false } } });
  client.setQueryData(authKeys.me, { id: 2, email: "engineer@fernmoor.example", name: "Fernmoor Signal Engineer", role: "engineer" });
  render(
    <QueryClientProvider client={client}>
      <MemoryRouter initialEntries={["/layouts/kestrel-bank/edit"]}>
        <Routes>
          <Route path="/layouts/:slug/edit" element={<LayoutEditPage />} />
        </Routes>
      </MemoryRouter>
    </QueryClientProvider>,
  );
  return calls;
}

describe("the workbench page", () => {
  it("saves with the revision it read; a stale one says someone else saved first and offers a reload", async () => {
    const calls = renderPage({ status: 409, body: { error: { code: "stale_revision", message: "someone else saved this layout first", details: [{ path: "$.revision", message: "stale" }] } } });
    fireEvent.click(await screen.findByRole("button", { name: "Remove detector JX" }));
    fireEvent.click(screen.getByRole("button", { name: "Save layout" }));
    const alert = await screen.findByText(/Someone else saved this layout first/);
    const put = calls.find((c) => c.method === "PUT")!;
    expect(put.url).toBe("/api/layouts/kestrel-bank");
    expect(put.body).toMatchObject({ format: "blocklight.layout/1", slug: "kestrel-bank", revision: 3 });
    expect((put.body as { detectors: { id: string }[] }).detectors.map((d) => d.id)).toEqual(["MA", "ME", "BA", "BE", "SA", "SE"]);
    expect((put.body as { nodes: { id: string; detectors: string[] }[] }).nodes.find((n) => n.id === "junction")?.detectors).toEqual(["ME"]);
    expect(Object.keys(put.body as object)).toEqual(["format", "slug", "name", "scale", "lines", "detectors", "signals", "points", "nodes", "schematic", "revision"]);
    expect(alert).toBeTruthy();
    fireEvent.click(screen.getByRole("button", { name: "Reload the layout" }));
    await waitFor(() => expect(screen.getByText(/No changes · revision 4/)).toBeTruthy());
    expect(screen.queryByText(/Someone else saved this layout first/)).toBeNull();
    expect(screen.getByRole("button", { name: "Remove detector JX" })).toBeTruthy();
  });

  it("shows the server's refusal beside the field its path names", async () => {
    renderPage({ status: 400, body: { error: { code: "breaks_live_rulebook", message: "1 error", details: [{ path: "$.signals[0].aspects", message: "the live rulebook (version 1) would break: M1 cannot show clear" }] } } });
    fireEvent.click(await screen.findByRole("button", { name: "Remove detector JX" }));
    fireEvent.click(screen.getByRole("button", { name: "Save layout" }));
    await waitFor(() => expect(document.querySelector('[data-record="signals:M1"]')?.textContent).toContain("cannot show clear"));
  });
});
