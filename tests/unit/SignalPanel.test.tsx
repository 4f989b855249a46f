// @vitest-environment happy-dom
import { cleanup, render, screen } from "@testing-library/react";
import { afterEach, describe, expect, it } from "vitest";
import { SignalPanel, type SignalPanelLayout } from "../../src/components/mimic/SignalPanel";

// Kestrel Bank Junction, trimmed to what the panel draws.
const kestrelBank: SignalPanelLayout = {
  lines: [
    { id: "main", name: "Main line" },
    { id: "branch", name: "Quarry branch" },
  ],
  detectors: [
    { id: "MA", name: "Main approach", line: "main", at: 4 },
    { id: "ME", name: "Main entry", line: "main", at: 14.2 },
    { id: "BA", name: "Branch approach", line: "branch", at: 3 },
  ],
  signals: [
    { id: "M1", name: "Main home", line: "main", at: 14, aspects: ["danger", "clear"] },
    { id: "B1", name: "Branch home", line: "branch", at: 11, aspects: ["danger", "caution", "clear"] },
  ],
};

afterEach(cleanup);

describe("SignalPanel", () => {
  it.each([
    ["M1", "Main home", "clear"],
    ["B1", "Branch home", "caution"],
  ] as const)("draws signal %s with its shown aspect and accessible name", (id, name, aspect) => {
    const { container } = render(<SignalPanel layout={kestrelBank} shown={{ M1: "clear", B1: "caution" }} />);
    const element = screen.getByRole("img", { name: `Signal ${id}, ${name}: ${aspect}` });
    expect(element.getAttribute("data-signal")).toBe(id);
    expect(element.getAttribute("data-aspect")).toBe(aspect);
    expect(container.querySelectorAll(`[data-signal="${id}"]`)).toHaveLength(1);
  });

  it("draws a signal with no known aspect as dark", () => {
    render(<SignalPanel layout={kestrelBank} shown={{ M1: "danger" }} />);
    const branchHome = screen.getByRole("img", { name: "Signal B1, Branch home: dark" });
    expect(branchHome.getAttribute("data-aspect")).toBe("dark");
    expect(screen.getByRole("img", { name: "Signal M1, Main home: danger" }).getAttribute("data-aspect")).toBe("danger");
  });

  it("draws every detector and marks the pulsed one", () => {
    const { container } = render(<SignalPanel layout={kestrelBank} shown={{}} pulsedDetector="ME" />);
    const ids = [...container.querySelectorAll("[data-detector]")].map((el) => el.getAttribute("data-detector"));
    expect(ids.sort()).toEqual(["BA", "MA", "ME"]);
    expect(container.querySelector('[data-detector="ME"]')?.getAttribute("data-pulsed")).toBe("true");
    expect(container.querySelector('[data-detector="MA"]')?.hasAttribute("data-pulsed")).toBe(false);
  });

  it("has no buttons or form controls, so the visitor display can use it", () => {
    const { container } = render(<SignalPanel layout={kestrelBank} shown={{ M1: "clear" }} />);
    expect(container.querySelectorAll("button, input, select, textarea")).toHaveLength(0);
  });
});
