/**
 * The wait for records being saved (server/runtime/recordsHold.ts), on a hand-driven clock:
 * nothing waits with no change expected; a board's messages wait in order from the first one
 * only the new records can make right; they are judged again after each adoption and at the
 * latest `waitMs` after the first of them arrived; other boards never wait.
 */
import { describe, expect, it } from "vitest";
import { RecordsHold } from "../../server/runtime/recordsHold";
import { ManualClock } from "../support/manualClock";

type Message = { node: string; seq: number; receivedAt: number; refused: boolean };

function rig(waitMs = 3_000) {
  const clock = new ManualClock(0);
  const released: { seqs: string[]; final: boolean }[] = [];
  const hold: RecordsHold<Message> = new RecordsHold<Message>({
    clock,
    waitMs,
    release: (items, final) => {
      released.push({ seqs: items.map((m) => `${m.node}:${m.seq}`), final });
      // What the runner does: judge each again, in order (it may wait again), or, at the bound, take it as it is.
      for (const m of items) if (final) passed.push(`${m.node}:${m.seq}`);
      else offer(m);
    },
  });
  const passed: string[] = [];
  const offer = (m: Message) => {
    if (hold.mustWait(m.node, m.refused)) hold.add(m.node, m);
    else passed.push(`${m.node}:${m.seq}`);
  };
  const send = (node: string, seq: number, refused = false) => offer({ node, seq, receivedAt: clock.now(), refused });
  return { clock, hold, released, passed, send };
}

describe("RecordsHold", () => {
  it("holds nothing while no change of the records is expected", () => {
    const { hold, passed, send } = rig();
    send("shed", 1, true);
    send("shed", 2);
    expect(passed).toEqual(["shed:1", "shed:2"]);
    expect(hold.size).toBe(0);
  });

  it("holds a board from its first refused message on, in order, and lets other boards pass", () => {
    const { hold, passed, send, released } = rig();
    const adopted = hold.expect();
    send("shed", 1);
    send("shed", 2, true);
    send("quarry", 1);
    send("shed", 3);
    expect(passed).toEqual(["shed:1", "quarry:1"]);
    expect(hold.size).toBe(2);
    adopted();
    adopted(); // a second call changes nothing
    expect(released).toEqual([{ seqs: ["shed:2", "shed:3"], final: false }]);
    expect(passed).toEqual(["shed:1", "quarry:1", "shed:2", "shed:3"]);
    expect(hold.changesExpected).toBe(0);
  });

  it("a message still refused after one adoption waits for the next change, within the bound of its first arrival", async () => {
    const { clock, hold, released, send, passed } = rig(3_000);
    const first = hold.expect();
    hold.expect(); // a second save, never adopted
    send("shed", 1, true);
    await clock.advance(2_000);
    first();
    // Judged again: still refused (the runner would find it so) and another change is expected.
    expect(released).toEqual([{ seqs: ["shed:1"], final: false }]);
    expect(hold.size).toBe(1);
    await clock.advance(999);
    expect(passed).toEqual([]);
    await clock.advance(1);
    expect(released.at(-1)).toEqual({ seqs: ["shed:1"], final: true });
    expect(passed).toEqual(["shed:1"]);
    expect(hold.size).toBe(0);
  });

  it("clear drops what waits and its timers", async () => {
    const { clock, hold, released, send } = rig();
    hold.expect();
    send("shed", 1, true);
    hold.clear();
    await clock.advance(10_000);
    expect(released).toEqual([]);
    expect(hold.size).toBe(0);
  });
});
