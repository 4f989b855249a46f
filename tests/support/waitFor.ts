/**
 * Waiting for what real I/O brings (a commit, an MQTT message, a mail, a child process):
 * poll a condition until a generous deadline, never sleep a fixed time. Our own timers are
 * not waited for: they run on a ManualClock (tests/support/manualClock.ts).
 */

/** How often a wait looks again. */
const POLL_MS = 20;
/** The deadline: generous for a loaded 2-core machine, inside vitest's 30 s per test. */
export const WAIT_FOR_MS = 20_000;

/**
 * Resolves with the first value `check` gives that is not undefined. A check that throws (a
 * row not there yet) is looked at again; at the deadline the error says what was awaited,
 * for how long, and what the last check threw.
 */
export async function waitForValue<T>(check: () => T | undefined | Promise<T | undefined>, what: string, timeoutMs = WAIT_FOR_MS): Promise<T> {
  const started = Date.now();
  for (;;) {
    let failure = "";
    try {
      const value = await check();
      if (value !== undefined) return value;
    } catch (err) {
      failure = ` (the last check threw: ${(err as Error).message})`;
    }
    if (Date.now() - started > timeoutMs) throw new Error(`waited ${Date.now() - started} ms for ${what}, in vain${failure}`);
    await new Promise((resolve) => setTimeout(resolve, POLL_MS));
  }
}

/** Resolves once `check` holds (see `waitForValue`). */
export async function waitFor(check: () => boolean | Promise<boolean>, what: string, timeoutMs = WAIT_FOR_MS): Promise<void> {
  await waitForValue(async () => ((await check()) ? true : undefined), what, timeoutMs);
}
