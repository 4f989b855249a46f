/**
 * Keeps one Node child process running for the launcher: prefixes its output with its name,
 * restarts it when it dies unexpectedly (with a growing pause, and gives up on a crash
 * loop), and stops it with SIGTERM, then SIGKILL after a grace period.
 */
import { spawn, type ChildProcess } from "node:child_process";
import readline from "node:readline";

export const STOP_GRACE_MS = 5_000;
const FIRST_RESTART_DELAY_MS = 1_000;
const MAX_RESTART_DELAY_MS = 15_000;
/** A child that ran this long before dying is restarted at once, as if for the first time. */
const HEALTHY_RUN_MS = 30_000;
/** More unexpected exits than this within CRASH_WINDOW_MS is a crash loop: stop trying. */
const MAX_CRASHES_IN_WINDOW = 5;
const CRASH_WINDOW_MS = 60_000;

export interface SupervisedChildOptions {
  /** Shown before every line of the child's output, e.g. "server". */
  name: string;
  /** Arguments to `node` (the launcher uses `--import tsx <file>`). */
  args: string[];
  env: NodeJS.ProcessEnv;
  cwd: string;
  /** Writes one line of the launcher's own output (already prefixed by the caller). */
  log: (line: string) => void;
  /** Called when the child keeps dying; the launcher shuts down. */
  onGiveUp: (name: string) => void;
  /** Prefix width, so the columns of several children line up. */
  prefixWidth?: number;
}

export class SupervisedChild {
  private child: ChildProcess | null = null;
  private stopping = false;
  private crashes: number[] = [];
  private restartDelayMs = FIRST_RESTART_DELAY_MS;
  private restartTimer: NodeJS.Timeout | null = null;
  private startedAt = 0;
  private readonly prefix: string;

  constructor(private readonly options: SupervisedChildOptions) {
    this.prefix = `[${options.name}]`.padEnd((options.prefixWidth ?? 0) + 2) + " ";
  }

  get name(): string {
    return this.options.name;
  }

  get pid(): number | undefined {
    return this.child?.pid;
  }

  start(): void {
    if (this.stopping) return;
    const child = spawn(process.execPath, this.options.args, {
      cwd: this.options.cwd,
      env: this.options.env,
      // stdin is a pipe the launcher never writes to: the child sees it close when the
      // launcher dies by any means (server/parentWatch.ts).
      stdio: ["pipe", "pipe", "pipe"],
      // Its own process group: Ctrl-C at the terminal (or `timeout`) signals the whole foreground
      // group at once, which would stop the broker beside its clients; the launcher alone gets
      // the signal and stops the children in order (clients, then the broker).
      detached: true,
    });
    this.child = child;
    this.startedAt = Date.now();
    this.pipe(child.stdout!, process.stdout);
    this.pipe(child.stderr!, process.stderr);
    child.once("error", (err) => this.options.log(`${this.options.name} could not be started: ${err.message}`));
    child.once("exit", (code, signal) => this.onExit(child, code, signal));
  }

  private pipe(from: NodeJS.ReadableStream, to: NodeJS.WritableStream): void {
    const lines = readline.createInterface({ input: from, crlfDelay: Infinity });
    lines.on("line", (line) => to.write(`${this.prefix}${line}\n`));
  }

  private onExit(child: ChildProcess, code: number | null, signal: NodeJS.Signals | null): void {
    if (this.child === child) this.child = null;
    if (this.stopping) return;
    const how = signal ? `signal ${signal}` : `code ${code}`;
    const now = Date.now();
    if (now - this.startedAt >= HEALTHY_RUN_MS) this.restartDelayMs = FIRST_RESTART_DELAY_MS;
    this.crashes = [...this.crashes.filter((at) => now - at < CRASH_WINDOW_MS), now];
    if (this.crashes.length > MAX_CRASHES_IN_WINDOW) {
      this.options.log(`${this.options.name} exited (${how}) ${this.crashes.length} times in a minute: giving up`);
      this.options.onGiveUp(this.options.name);
      return;
    }
    const delay = this.restartDelayMs;
    this.restartDelayMs = Math.min(this.restartDelayMs * 2, MAX_RESTART_DELAY_MS);
    this.options.log(`${this.options.name} exited unexpectedly (${how}); restarting it in ${(delay / 1000).toFixed(0)} s`);
    this.restartTimer = setTimeout(() => {
      this.restartTimer = null;
      this.start();
    }, delay);
  }

  /** From now on an exit is expected: no restart (e.g. Ctrl-C reached the whole group). */
  markStopping(): void {
    this.stopping = true;
    if (this.restartTimer) clearTimeout(this.restartTimer);
  }

  /** SIGTERM, then SIGKILL if the child is still there after the grace period. */
  async stop(graceMs = STOP_GRACE_MS): Promise<void> {
    this.markStopping();
    const child = this.child;
    if (!child || child.exitCode !== null || child.signalCode !== null) return;
    const exited = new Promise<void>((resolve) => child.once("exit", () => resolve()));
    child.kill("SIGTERM");
    let timer: NodeJS.Timeout | undefined;
    const timedOut = new Promise<boolean>((resolve) => {
      timer = setTimeout(() => resolve(true), graceMs);
    });
    const late = await Promise.race([exited.then(() => false), timedOut]);
    clearTimeout(timer);
    if (late) {
      this.options.log(`${this.options.name} did not stop within ${graceMs / 1000} s: killing it`);
      child.kill("SIGKILL");
      await exited;
    }
  }
}
