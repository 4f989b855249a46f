// @vitest-environment happy-dom
import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import { act, cleanup, fireEvent, render, screen, waitFor, within } from "@testing-library/react";
import { useState } from "react";
import { MemoryRouter } from "react-router-dom";
import { afterEach, describe, expect, it, vi } from "vitest";
import { NewLayoutForm, slugFrom } from "../../src/components/layouts/NewLayoutForm";
import { RecordsEditor } from "../../src/components/records/RecordsEditor";
import { PublishControl } from "../../src/components/rulebook/PublishControl";
import { VerdictBadge } from "../../src/components/rulebook/VersionTable";
import type { DrawingDoc } from "../../src/components/schematic/edits";
import { emptySchematic } from "../../src/components/schematic/format";
import { canRedo, canUndo, record, redo, startHistory, undo, type History } from "../../src/components/schematic/history";
import { SchematicEditor } from "../../src/components/schematic/SchematicEditor";
import { draftErrors, type LayoutDraft } from "../../src/lib/layoutDraft";

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

function stubServer(reply: { status: number; body: unknown }) {
  const fetchMock = vi.fn(async () => new Response(JSON.stringify(reply.body), { status: reply.status, headers: { "Content-Type": "application/json" } }));
  vi.stubGlobal("fetch", fetchMock);
  return fetchMock;
}

const withProviders = (ui: React.ReactNode) => (
  <QueryClientProvider client={new QueryClient({ defaultOptions: { mutations: { retry: false } } })}>
    <MemoryRouter>{ui}</MemoryRouter>
  </QueryClientProvider>
);

function draft(): LayoutDraft {
  return {
    slug: "kestrel-bank",
    name: "Kestrel Bank Junction",
    scale: { name: "G", ratio: 22.5 },
    lines: [{ id: "main", name: "Main line" }],
    detectors: [
      { id: "MA", name: "Main approach", line: "main", at: 4 },
      { id: "ME", name: "Main entry", line: "main", at: 14 },
    ],
    signals: [{ id: "M1", name: "Main home", line: "main", at: 14, aspects: ["danger", "clear"] }],
    points: [],
    nodes: [{ id: "junction", name: "Junction board", detectors: ["MA", "ME"], signals: ["M1"], points: [] }],
    schematic: { ...emptySchematic(), tracks: [{ line: "main", points: [[0, 0], [400, 0]], metres: [0, 20] }] },
  };
}

function EditableRecords({ initial, errors = [] }: { initial: LayoutDraft; errors?: { path: string; message: string }[] }) {
  const [d, setD] = useState(initial);
  return (
    <>
      <RecordsEditor draft={d} errors={[...errors, ...draftErrors(d)]} readOnly={false} onChange={setD} />
      <output data-testid="draft">{JSON.stringify(d)}</output>
    </>
  );
}
const current = (): LayoutDraft => JSON.parse(screen.getByTestId("draft").textContent ?? "{}");

describe("New layout", () => {
  it.each([
    ["Kestrel Bank Junction", "kestrel-bank-junction"],
    ["  Wrenfold Loop (east) ", "wrenfold-loop-east"],
  ])("suggests the slug of %j", (name, slug) => {
    expect(slugFrom(name)).toBe(slug);
  });

  it("sends name, slug and the chosen scale's ratio", async () => {
    const fetchMock = stubServer({ status: 201, body: { layout: { slug: "wrenfold-loop" } } });
    render(withProviders(<NewLayoutForm />));
    fireEvent.change(screen.getByLabelText("Name"), { target: { value: "Wrenfold Loop" } });
    fireEvent.change(screen.getByLabelText("Scale"), { target: { value: "I" } });
    fireEvent.click(screen.getByRole("button", { name: "Create layout" }));
    await waitFor(() => expect(fetchMock).toHaveBeenCalled());
    const [url, init] = fetchMock.mock.calls[0] as unknown as [string, RequestInit];
    expect(url).toBe("/api/layouts");
    expect(JSON.parse(String(init.body))).toEqual({ name: "Wrenfold Loop", slug: "wrenfold-loop", scale: { name: "I", ratio: 32 } });
  });

  it("asks for a custom ratio and refuses a bad one beside the field, sending nothing", async () => {
    const fetchMock = stubServer({ status: 201, body: {} });
    render(withProviders(<NewLayoutForm />));
    fireEvent.change(screen.getByLabelText("Name"), { target: { value: "Quarry tramway" } });
    fireEvent.change(screen.getByLabelText("Scale"), { target: { value: "custom" } });
    fireEvent.change(screen.getByLabelText("Scale name"), { target: { value: "7/8 in" } });
    fireEvent.change(screen.getByLabelText("Ratio (1:…)"), { target: { value: "0" } });
    fireEvent.click(screen.getByRole("button", { name: "Create layout" }));
    const ratio = screen.getByLabelText("Ratio (1:…)");
    await waitFor(() => expect(ratio.getAttribute("aria-invalid")).toBe("true"));
    expect(document.getElementById(ratio.getAttribute("aria-describedby")!.split(" ")[0])?.textContent).toMatch(/between 1 and 1000/);
    expect(fetchMock).not.toHaveBeenCalled();
  });

  it("says when the slug is taken (409)", async () => {
    stubServer({ status: 409, body: { error: { code: "conflict", message: "exists" } } });
    render(withProviders(<NewLayoutForm />));
    fireEvent.change(screen.getByLabelText("Name"), { target: { value: "Kestrel Bank" } });
    fireEvent.click(screen.getByRole("button", { name: "Create layout" }));
    expect(await screen.findByText("a layout with this slug exists already")).toBeTruthy();
  });
});

describe("records tables", () => {
  it("adds a detector through its inline form, kept in position order", async () => {
    render(<EditableRecords initial={draft()} />);
    fireEvent.click(screen.getByRole("button", { name: "Add detector" }));
    const form = screen.getByRole("form", { name: "New detector" });
    fireEvent.change(within(form).getByLabelText("Id"), { target: { value: "MX" } });
    fireEvent.change(within(form).getByLabelText("Name"), { target: { value: "Main middle" } });
    fireEvent.change(within(form).getByLabelText("At (m)"), { target: { value: "9.5" } });
    // happy-dom does not submit a form from its button's click; Chrome does (tests/e2e/workbench.test.ts).
    fireEvent.submit(form);
    await waitFor(() => expect(current().detectors.map((d) => d.id)).toEqual(["MA", "MX", "ME"]));
  });

  it("refuses an id used twice and a negative position, beside the fields", async () => {
    render(<EditableRecords initial={draft()} />);
    fireEvent.click(screen.getByRole("button", { name: "Add detector" }));
    const form = screen.getByRole("form", { name: "New detector" });
    fireEvent.change(within(form).getByLabelText("Id"), { target: { value: "MA" } });
    fireEvent.change(within(form).getByLabelText("Name"), { target: { value: "Again" } });
    fireEvent.change(within(form).getByLabelText("At (m)"), { target: { value: "-1" } });
    fireEvent.submit(form);
    await waitFor(() => expect(within(form).getByLabelText("Id").getAttribute("aria-invalid")).toBe("true"));
    expect(within(form).getByText("MA is used already")).toBeTruthy();
    expect(within(form).getByText("must not be negative")).toBeTruthy();
    expect(current().detectors).toHaveLength(2);
  });

  it("renaming a detector keeps its node serving it; removing a signal drops it from the node", async () => {
    render(<EditableRecords initial={draft()} />);
    fireEvent.click(screen.getByRole("button", { name: "Edit detector MA" }));
    const form = screen.getByRole("form", { name: "Edit detector MA" });
    fireEvent.change(within(form).getByLabelText("Id"), { target: { value: "MB" } });
    fireEvent.submit(form);
    await waitFor(() => expect(current().nodes[0].detectors).toEqual(["MB", "ME"]));
    fireEvent.click(screen.getByRole("button", { name: "Remove signal M1" }));
    expect(current().nodes[0].signals).toEqual([]);
  });

  it("will not remove a line that still has records on it", () => {
    render(<EditableRecords initial={draft()} />);
    fireEvent.click(screen.getByRole("button", { name: "Remove line main" }));
    expect(screen.getByRole("alert").textContent).toMatch(/still has MA, ME, M1/);
    expect(current().lines).toHaveLength(1);
  });

  it("shows a server error beside the field its JSON path names", () => {
    render(<EditableRecords initial={draft()} errors={[{ path: "$.signals[0].aspects", message: "the live rulebook (version 1) would break: signal \"M1\" cannot show caution" }]} />);
    const row = document.querySelector('[data-record="signals:M1"]')!;
    expect(row.textContent).toContain("cannot show caution");
  });
});

function EditableDrawing({ initial }: { initial: DrawingDoc }) {
  const [h, setH] = useState<History<DrawingDoc>>(() => startHistory(initial));
  return (
    <>
      <SchematicEditor doc={h.present} onChange={(next, gesture) => setH((x) => record(x, next, gesture ?? null))} onGestureEnd={() => {}} onUndo={() => setH(undo)} onRedo={() => setH(redo)} />
      <output data-testid="history">{`${canUndo(h)}:${canRedo(h)}`}</output>
    </>
  );
}

describe("schematic editor", () => {
  it("moves a detector along its line from the keyboard, and undo takes it back", () => {
    render(<EditableDrawing initial={draft()} />);
    const ma = screen.getByRole("button", { name: /^Detector MA, Main approach, on main at 4\.0 m/ });
    act(() => ma.focus());
    fireEvent.keyDown(ma, { key: "ArrowRight" });
    fireEvent.keyDown(screen.getByRole("button", { name: /^Detector MA/ }), { key: "ArrowRight", shiftKey: true });
    expect(screen.getByRole("button", { name: /^Detector MA/ }).getAttribute("data-at")).toBe("5.1");
    expect(screen.getByRole("spinbutton", { name: "MA at (m)" })).toHaveProperty("value", "5.1");
    fireEvent.keyDown(screen.getByRole("application"), { key: "z", ctrlKey: true });
    expect(screen.getByRole("button", { name: /^Detector MA/ }).getAttribute("data-at")).toBe("4.1");
    fireEvent.keyDown(screen.getByRole("application"), { key: "y", ctrlKey: true });
    expect(screen.getByRole("button", { name: /^Detector MA/ }).getAttribute("data-at")).toBe("5.1");
  });

  it("typing a position moves the item on the drawing", () => {
    render(<EditableDrawing initial={draft()} />);
    fireEvent.focus(screen.getByRole("button", { name: /^Detector MA/ }));
    const at = screen.getByRole("spinbutton", { name: "MA at (m)" });
    fireEvent.change(at, { target: { value: "10" } });
    fireEvent.keyDown(at, { key: "Enter" });
    const mark = screen.getByRole("button", { name: /^Detector MA/ });
    // 400 drawing units for 20 m: 10 m is at x = 200.
    expect(mark.getAttribute("transform")).toBe("translate(200 0)");
  });

  it("places a new signal on the selected track from the keyboard, and removes a bend with Delete", () => {
    const initial = draft();
    initial.schematic.tracks[0].points = [[0, 0], [200, 0], [400, 0]];
    render(<EditableDrawing initial={initial} />);
    fireEvent.focus(screen.getByRole("button", { name: /^Track of line main/ }));
    fireEvent.click(screen.getByRole("button", { name: "New signal" }));
    expect(screen.getByRole("button", { name: /^Signal S1, Signal S1, on main at/ })).toBeTruthy();
    fireEvent.focus(screen.getByRole("button", { name: /^Track of line main/ }));
    const bend = screen.getByRole("button", { name: /^Bend 2 of line main/ });
    fireEvent.focus(bend);
    fireEvent.keyDown(bend, { key: "Delete" });
    expect(screen.queryByRole("button", { name: /^Bend 3 of line main/ })).toBeNull();
  });
});

describe("publishing and verdicts", () => {
  it.each([
    ["proved", "✓"],
    ["refuted", "✗"],
    ["unfinished", "○"],
  ] as const)("draws a %s verdict with its own mark and word", (verdict, mark) => {
    const { container } = render(<VerdictBadge verdict={verdict} />);
    expect(container.querySelector(`[data-verdict="${verdict}"]`)?.textContent).toContain(mark);
    expect(container.textContent).toContain(verdict);
  });

  it("publishing an unproved version needs 'publish without proof' and a reason", async () => {
    const fetchMock = stubServer({ status: 200, body: { version: 3 } });
    render(withProviders(<PublishControl slug="kestrel-bank" layoutName="Kestrel Bank Junction" version={{ version: 3, status: "draft", live: false, verdict: "refuted" }} />));
    fireEvent.click(screen.getByRole("button", { name: "Publish v3" }));
    const dialog = screen.getByRole("dialog");
    expect(dialog.textContent).toContain("Its last proof refuted it.");
    fireEvent.click(within(dialog).getByRole("button", { name: "Publish v3 without proof" }));
    await waitFor(() => expect(within(dialog).getByText("say why it goes live without a proof")).toBeTruthy());
    expect(fetchMock).not.toHaveBeenCalled();
    fireEvent.click(within(dialog).getByRole("checkbox", { name: "Publish without proof" }));
    fireEvent.change(within(dialog).getByLabelText("Reason (kept in the audit log)"), { target: { value: "Open day: proof re-run on Monday" } });
    fireEvent.click(within(dialog).getByRole("button", { name: "Publish v3 without proof" }));
    await waitFor(() => expect(fetchMock).toHaveBeenCalled());
    const [url, init] = fetchMock.mock.calls[0] as unknown as [string, RequestInit];
    expect(url).toBe("/api/layouts/kestrel-bank/rulebooks/3/publish");
    expect(JSON.parse(String(init.body))).toEqual({ withoutProof: true, reason: "Open day: proof re-run on Monday" });
  });
});
