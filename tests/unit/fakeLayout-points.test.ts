/**
 * The fake layout's points boards and trains, with a hand-driven clock: a board reports its
 * points at power-up, obeys `…/points/{id}/set` for power-worked points (moving, then the new
 * position, numbered with its pulses), ignores old commands and hand-worked points; a train on a
 * facing junction takes the road the points lie for.
 */
import { describe, expect, it } from "vitest";
import { ManualScheduler } from "../../broker/fakeLayout/clock";
import { FakeLayoutPlayer, POINTS_MOVE_MS, type OutMessage, type TrainEvent } from "../../broker/fakeLayout/player";
import type { Scenario } from "../../broker/fakeLayout/scenario";
import { wrenfoldLoopLayout } from "@shared/demo/fernmoor";
import type { LayoutFile } from "@shared/layout/schema";

const AT = "2026-05-02T10:00:00.000Z";

function setUp(layout: LayoutFile = wrenfoldLoopLayout(), trains: Scenario["trains"] = []) {
  const scheduler = new ManualScheduler();
  const sent: OutMessage[] = [];
  const events: TrainEvent[] = [];
  const player = new FakeLayoutPlayer({
    layout,
    scenario: { format: "blocklight.scenario/1", name: "points test", trains },
    scheduler,
    send: (m) => sent.push(m),
    onEvent: (e) => events.push(e),
    newBoot: () => "boot1",
  });
  const reports = () => sent.filter((m) => m.kind === "points").map((m) => `${m.node}:${(m.payload as { points: string }).points}=${(m.payload as { lies: string }).lies}#${(m.payload as { seq: number }).seq}`);
  return { scheduler, player, sent, events, reports };
}

describe("fake layout points boards", () => {
  it("report their points at power-up, then obey a set: moving now, the new position after the motor's time", () => {
    const { scheduler, player, reports } = setUp();
    player.start();
    expect(reports()).toEqual(["loop-points:P2=normal#1"]);
    player.onPointsSet("loop-points", "P2", { to: "reverse", rev: 7, at: AT });
    expect(reports()).toEqual(["loop-points:P2=normal#1", "loop-points:P2=moving#2"]);
    expect(player.pointsLie("P2")).toBe("moving");
    scheduler.advanceBy(POINTS_MOVE_MS - 1);
    expect(reports()).toHaveLength(2);
    scheduler.advanceBy(1);
    expect(reports().at(-1)).toBe("loop-points:P2=reverse#3");
    expect(player.pointsLie("P2")).toBe("reverse");
  });

  it.each([
    ["a redelivered command (same rev)", 7, "normal"],
    ["an older command", 3, "normal"],
  ])("ignore %s", (_name, rev, to) => {
    const { scheduler, player, reports } = setUp();
    player.start();
    player.onPointsSet("loop-points", "P2", { to: "reverse", rev: 7, at: AT });
    scheduler.advanceBy(POINTS_MOVE_MS);
    player.onPointsSet("loop-points", "P2", { to: to as "normal", rev, at: AT });
    scheduler.advanceBy(POINTS_MOVE_MS);
    expect(reports()).toEqual(["loop-points:P2=normal#1", "loop-points:P2=moving#2", "loop-points:P2=reverse#3"]);
  });

  it("go straight to a newer command's position while moving, and ignore commands to hand-worked points", () => {
    const { scheduler, player, reports } = setUp();
    player.start();
    player.onPointsSet("loop-points", "P2", { to: "reverse", rev: 1, at: AT });
    scheduler.advanceBy(POINTS_MOVE_MS / 2);
    player.onPointsSet("loop-points", "P2", { to: "normal", rev: 2, at: AT });
    scheduler.advanceBy(POINTS_MOVE_MS);
    expect(reports()).toEqual(["loop-points:P2=normal#1", "loop-points:P2=moving#2", "loop-points:P2=normal#3"]);

    const hand = wrenfoldLoopLayout();
    hand.points = hand.points.map((p) => ({ ...p, worked: "hand" }));
    const h = setUp(hand);
    h.player.start();
    h.player.onPointsSet("loop-points", "P2", { to: "reverse", rev: 1, at: AT });
    h.scheduler.advanceBy(POINTS_MOVE_MS);
    expect(h.reports()).toEqual(["loop-points:P2=normal#1"]);
  });

  it.each([
    ["normal", "through", "loop-points:TX"],
    ["reverse", "loop", "loop-points:LX"],
  ] as const)("a train on the facing junction follows the points lying %s: it takes the %s road", (lies, road, firstPast) => {
    const { scheduler, player, sent, events } = setUp(wrenfoldLoopLayout(), [
      { route: ["through", "loop"], axles: 2, axleSpacingM: 0.3, speedMps: 1, startS: 0 },
    ]);
    player.start();
    if (lies === "reverse") {
      player.onPointsSet("loop-points", "P2", { to: "reverse", rev: 1, at: AT });
      scheduler.advanceBy(POINTS_MOVE_MS);
    }
    player.onAspect("wrenfold-home", "W1", { aspect: "clear", rev: 2, at: AT });
    scheduler.advanceBy(120_000);
    expect(events).toContainEqual(expect.objectContaining({ type: "takes-road", route: road }));
    const past = sent.filter((m) => m.kind === "pulse" && m.node === "loop-points").map((m) => `${m.node}:${(m.payload as { detector: string }).detector}`);
    expect(past[0]).toBe(firstPast);
  });
});
