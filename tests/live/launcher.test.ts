/**
 * The launcher as a user runs it: a fresh data directory, free ports, DEMO off. It must bring
 * the server up against its own PostgreSQL and, on SIGTERM, leave nothing running behind.
 */
import { spawn, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { freePort } from "../../server/db/embeddedPostgres";

const ROOT = path.resolve(__dirname, "../..");
const UP_TIMEOUT_MS = 60_000;
const STOP_TIMEOUT_MS = 30_000;

/** Processes whose command line mentions `text` (read from /proc; zombies are not running). */
function processesMentioning(text: string): { pid: number; cmd: string }[] {
  const found: { pid: number; cmd: string }[] = [];
  for (const entry of fs.readdirSync("/proc")) {
    if (!/^\d+$/.test(entry)) continue;
    try {
      const stat = fs.readFileSync(`/proc/${entry}/stat`, "utf8");
      const state = stat.slice(stat.lastIndexOf(")") + 2, stat.lastIndexOf(")") + 3);
      if (state === "Z") continue;
      const cmd = fs.readFileSync(`/proc/${entry}/cmdline`, "utf8").replaceAll("\0", " ");
      if (cmd.includes(text)) found.push({ pid: Number(entry), cmd });
    } catch {
      /* gone while we looked */
    }
  }
  return found;
}

/** Processes whose environment names this DATA_DIR: the launcher's children. */
function processesWithDataDir(dataDir: string): number[] {
  const found: number[] = [];
  for (const entry of fs.readdirSync("/proc")) {
    if (!/^\d+$/.test(entry) || Number(entry) === process.pid) continue;
    try {
      const stat = fs.readFileSync(`/proc/${entry}/stat`, "utf8");
      if (stat.slice(stat.lastIndexOf(")") + 2, stat.lastIndexOf(")") + 3) === "Z") continue;
      if (fs.readFileSync(`/proc/${entry}/environ`, "utf8").split("\0").includes(`DATA_DIR=${dataDir}`)) found.push(Number(entry));
    } catch {
      /* gone, or not ours to read */
    }
  }
  return found;
}

async function waitUntil(check: () => boolean, timeoutMs: number): Promise<boolean> {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    if (check()) return true;
    await new Promise((resolve) => setTimeout(resolve, 200));
  }
  return check();
}

async function waitForDbUp(url: string, child: ChildProcess): Promise<unknown> {
  const deadline = Date.now() + UP_TIMEOUT_MS;
  while (Date.now() < deadline && child.exitCode === null) {
    try {
      const body = (await (await fetch(url, { signal: AbortSignal.timeout(2_000) })).json()) as { db?: string };
      if (body.db === "up") return body;
    } catch {
      /* not yet */
    }
    await new Promise((resolve) => setTimeout(resolve, 250));
  }
  throw new Error(`no healthy server at ${url} (launcher exit code ${child.exitCode})`);
}

describe("npm start's launcher", () => {
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), "blocklight-launcher-"));
  let launcher: ChildProcess | null = null;
  let output = "";

  afterAll(() => {
    if (launcher && launcher.exitCode === null) launcher.kill("SIGKILL");
    fs.rmSync(dataDir, { recursive: true, force: true });
  });

  it(
    "serves with its own PostgreSQL and leaves no PostgreSQL running after SIGTERM",
    async () => {
      const [port, mqttPort, pgPort] = [await freePort(), await freePort(), await freePort()];
      const env: NodeJS.ProcessEnv = { ...process.env, DATA_DIR: dataDir, PORT: String(port), MQTT_PORT: String(mqttPort), PG_PORT: String(pgPort), DEMO: "off" };
      delete env.DATABASE_URL;
      delete env.MQTT_URL;
      delete env.DEV; // vitest sets it; the launcher would start the Vite dev server
      launcher = spawn(process.execPath, ["--import", "tsx", path.join(ROOT, "server/launcher.ts")], { cwd: ROOT, env, stdio: ["ignore", "pipe", "pipe"] });
      launcher.stdout!.on("data", (chunk: Buffer) => (output += chunk.toString()));
      launcher.stderr!.on("data", (chunk: Buffer) => (output += chunk.toString()));

      const health = await waitForDbUp(`http://127.0.0.1:${port}/api/health`, launcher).catch((err: Error) => {
        throw new Error(`${err.message}\n${output}`);
      });
      expect(health).toMatchObject({ db: "up" });
      expect(processesMentioning(path.join(dataDir, "pg")).length).toBeGreaterThan(0);
      // A fresh install with DEMO off has no account: the banner prints the one-time setup link.
      expect(await waitUntil(() => /\/setup\?token=[A-Za-z0-9_-]+/.test(output), 10_000), output).toBe(true);
      const token = fs.readFileSync(path.join(dataDir, "setup-token"), "utf8").trim();
      expect(output).toContain(`http://127.0.0.1:${port}/setup?token=${token}`);

      const exited = new Promise<number | null>((resolve) => launcher!.once("exit", (code) => resolve(code)));
      launcher.kill("SIGTERM");
      const code = await Promise.race([exited, new Promise<"timeout">((resolve) => setTimeout(() => resolve("timeout"), STOP_TIMEOUT_MS))]);
      expect(code, output).toBe(0);
      expect(output).toContain("PostgreSQL stopped");
      expect(processesMentioning(dataDir)).toEqual([]);
    },
    UP_TIMEOUT_MS + STOP_TIMEOUT_MS + 10_000,
  );

  it(
    "after kill -9 of the launcher its children and PostgreSQL stop by themselves, and a cluster left behind is stopped by the next start",
    async () => {
      const dir = fs.mkdtempSync(path.join(os.tmpdir(), "blocklight-launcher-kill-"));
      const [port, mqttPort, pgPort] = [await freePort(), await freePort(), await freePort()];
      const env: NodeJS.ProcessEnv = { ...process.env, DATA_DIR: dir, PORT: String(port), MQTT_PORT: String(mqttPort), PG_PORT: String(pgPort), DEMO: "off" };
      delete env.DATABASE_URL;
      delete env.MQTT_URL;
      delete env.DEV; // vitest sets it; the launcher would start the Vite dev server
      let log = "";
      const launch = () => {
        const child = spawn(process.execPath, ["--import", "tsx", path.join(ROOT, "server/launcher.ts")], { cwd: ROOT, env, stdio: ["ignore", "pipe", "pipe"] });
        child.stdout!.on("data", (chunk: Buffer) => (log += chunk.toString()));
        child.stderr!.on("data", (chunk: Buffer) => (log += chunk.toString()));
        return child;
      };
      const health = `http://127.0.0.1:${port}/api/health`;
      try {
        // 1. kill -9: no signal handler runs, yet nothing is left running.
        const first = launch();
        await waitForDbUp(health, first);
        expect(processesWithDataDir(dir).length).toBeGreaterThan(0);
        first.kill("SIGKILL");
        const allGone = await waitUntil(() => processesWithDataDir(dir).length === 0 && processesMentioning(path.join(dir, "pg")).length === 0, 20_000);
        expect(allGone, `left running: ${processesWithDataDir(dir).map((pid) => fs.readFileSync(`/proc/${pid}/cmdline`, "utf8").replaceAll("\0", " ")).join("; ")}\n${log}`).toBe(true);

        // 2. The guard is gone too (as if the whole group was killed but PostgreSQL, which pg_ctl
        //    daemonised): the next start stops the orphaned cluster instead of refusing.
        const second = launch();
        await waitForDbUp(health, second);
        for (const guard of processesMentioning("blocklight-pg-guard").filter((p) => p.cmd.includes(dir))) process.kill(guard.pid, "SIGKILL");
        second.kill("SIGKILL");
        await waitUntil(() => processesWithDataDir(dir).length === 0, 20_000);
        expect(processesMentioning(path.join(dir, "pg")).length).toBeGreaterThan(0);
        log = "";
        const third = launch();
        await waitForDbUp(health, third);
        expect(log).toContain("an earlier start left running");
        const exited = new Promise<number | null>((resolve) => third.once("exit", (code) => resolve(code)));
        third.kill("SIGTERM");
        expect(await exited, log).toBe(0);
        expect(processesMentioning(dir)).toEqual([]);
      } finally {
        for (const pid of processesWithDataDir(dir)) process.kill(pid, "SIGKILL");
        for (const p of processesMentioning(path.join(dir, "pg"))) process.kill(p.pid, "SIGKILL");
        fs.rmSync(dir, { recursive: true, force: true });
      }
    },
    3 * UP_TIMEOUT_MS + 60_000,
  );

  it(
    "with the demo running, Ctrl-C (SIGINT to the whole terminal group) stops it in order, with no kill and no error line",
    async () => {
      const dir = fs.mkdtempSync(path.join(os.tmpdir(), "blocklight-launcher-ctrlc-"));
      const [port, mqttPort, pgPort] = [await freePort(), await freePort(), await freePort()];
      const env: NodeJS.ProcessEnv = { ...process.env, DATA_DIR: dir, PORT: String(port), MQTT_PORT: String(mqttPort), PG_PORT: String(pgPort), DEMO: "on" };
      delete env.DATABASE_URL;
      delete env.MQTT_URL;
      delete env.DEV;
      let log = "";
      // Its own process group, as a terminal's foreground job.
      const child = spawn(process.execPath, ["--import", "tsx", path.join(ROOT, "server/launcher.ts")], { cwd: ROOT, env, stdio: ["ignore", "pipe", "pipe"], detached: true });
      child.stdout!.on("data", (chunk: Buffer) => (log += chunk.toString()));
      child.stderr!.on("data", (chunk: Buffer) => (log += chunk.toString()));
      try {
        await waitForDbUp(`http://127.0.0.1:${port}/api/health`, child);
        // The demo's boards and the server's layout clients are on the broker before the stop.
        expect(await waitUntil(() => /board \S+ connected as kestrel-bank\./.test(log), 30_000), log).toBe(true);
        const beforeStop = log.length;
        const exited = new Promise<number | null>((resolve) => child.once("exit", (code) => resolve(code)));
        process.kill(-child.pid!, "SIGINT");
        expect(await exited, log).toBe(0);
        const stopLog = log.slice(beforeStop);
        // Clients stop before the broker: no reconnect noise, no child left to be killed.
        expect(stopLog, stopLog).not.toMatch(/did not stop|killing it|MQTT client error|ECONNREFUSED|Error:/);
        expect(stopLog).toContain("PostgreSQL stopped");
        expect(processesMentioning(dir)).toEqual([]);
      } finally {
        for (const pid of processesWithDataDir(dir)) process.kill(pid, "SIGKILL");
        for (const p of processesMentioning(path.join(dir, "pg"))) process.kill(p.pid, "SIGKILL");
        fs.rmSync(dir, { recursive: true, force: true });
      }
    },
    UP_TIMEOUT_MS + STOP_TIMEOUT_MS + 30_000,
  );
});
