// @vitest-environment happy-dom
import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import { cleanup, fireEvent, render, screen, waitFor } from "@testing-library/react";
import { afterEach, describe, expect, it, vi } from "vitest";
import type { LayoutDetail } from "@shared/contract/rest";
import { kestrelBankLayout } from "@shared/demo/fernmoor";
import { NodeCredentials } from "../../src/components/layouts/NodeCredentials";

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

const file = kestrelBankLayout();
const layout: LayoutDetail = { ...file, schematic: null, versions: [], revision: 1, liveVersion: 1, archivedAt: null, nodes: file.nodes.map((n) => ({ ...n, points: n.points ?? [] })) };

function renderWithServer(reply: { status: number; body: unknown }) {
  const fetchMock = vi.fn(async () => new Response(JSON.stringify(reply.body), { status: reply.status, headers: { "Content-Type": "application/json" } }));
  vi.stubGlobal("fetch", fetchMock);
  render(
    <QueryClientProvider client={new QueryClient()}>
      <NodeCredentials layout={layout} />
    </QueryClientProvider>,
  );
  return fetchMock;
}

describe("NodeCredentials", () => {
  it("re-issues a board's secret after confirmation and shows it once", async () => {
    const board = file.nodes[0];
    const fetchMock = renderWithServer({ status: 201, body: { id: board.id, secret: "s3cret-shown-once" } });
    fireEvent.click(screen.getByRole("button", { name: `New secret for ${board.id}` }));
    expect(fetchMock).not.toHaveBeenCalled();
    fireEvent.click(screen.getByRole("button", { name: "Issue a new secret" }));
    expect((await screen.findByRole("status")).textContent).toContain("s3cret-shown-once");
    const [url, init] = fetchMock.mock.calls[0] as unknown as [string, RequestInit];
    expect(url).toBe("/api/layouts/kestrel-bank/nodes");
    expect(JSON.parse(String(init.body))).toEqual({ id: board.id, name: board.name, detectors: board.detectors, signals: board.signals });
  });

  it("lists the server's refusal with its paths", async () => {
    renderWithServer({ status: 400, body: { error: { code: "invalid_node", message: "no", details: [{ path: "$.detectors[0]", message: 'detector "MA" is already served by node "bank-foot"' }] } } });
    fireEvent.input(screen.getByLabelText("Board id"), { target: { value: "spare" } });
    fireEvent.input(screen.getByLabelText("Board name"), { target: { value: "Spare board" } });
    fireEvent.click(screen.getByLabelText("MA"));
    fireEvent.click(screen.getByRole("button", { name: "Register board" }));
    await waitFor(() => expect(screen.getByRole("alert").textContent).toContain("already served"));
  });
});
