/**
 * A child of the launcher stops when the launcher is gone, however it went (Ctrl-C, SIGTERM,
 * or `kill -9`, which no signal handler sees).
 *
 * The launcher gives each child a pipe as stdin and never writes to it. The kernel closes the
 * pipe when the launcher's process ends for any reason, so the child reads end-of-file at
 * once: no polling, no pid reuse races. Outside the launcher (`BLOCKLIGHT_SUPERVISED` unset)
 * this does nothing, so a server started by hand keeps its terminal's stdin.
 */

/** After asking for a clean stop, the child exits anyway once this has passed. */
export const ORPHAN_EXIT_GRACE_MS = 5_000;

export function stopWhenLauncherGoes(stop: (reason: string) => unknown, env: NodeJS.ProcessEnv = process.env): void {
  if (!env.BLOCKLIGHT_SUPERVISED) return;
  let gone = false;
  const onGone = () => {
    if (gone) return;
    gone = true;
    setTimeout(() => process.exit(1), ORPHAN_EXIT_GRACE_MS).unref();
    void stop("the launcher has gone");
  };
  process.stdin.on("end", onGone);
  process.stdin.on("close", onGone);
  process.stdin.on("error", onGone);
  // Reading keeps the pipe watched; nothing is ever written to it.
  process.stdin.resume();
}
