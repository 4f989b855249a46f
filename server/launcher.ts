/**
 * `npm start` (after `vite build`): brings up the whole of Blocklight on one machine.
 *
 * 1. PostgreSQL: embedded unless DATABASE_URL is set; the launcher owns it and stops it last.
 * 2. Migrations and (DEMO on) the Fernmoor demo data and the demo boards' secrets, once,
 *    so every child finds a ready database.
 * 3. Child processes, each `node --import tsx <file>` with DATABASE_URL set:
 *    the broker (unless MQTT_URL is set), the server, and with DEMO on one fake layout per
 *    demo layout (Kestrel Bank, Wrenfold Loop) playing its day in a loop once the server answers
 *    /api/health; with DEV=1 also
 *    the Vite dev server. A child that dies unexpectedly is restarted.
 * Ctrl-C / SIGTERM stops the clients (fake layout, server) together, then the broker, then
 * PostgreSQL. If the launcher dies without stopping them (`kill -9`), the children see their
 * stdin pipe close and stop themselves (server/parentWatch.ts), a guard process stops
 * PostgreSQL, and the next start stops a cluster of this DATA_DIR still left running.
 * With `--build` (npm start) the client is rebuilt first, but only when its sources changed.
 * `server/index.ts` still runs on its own; the two agree only through env.
 */
import fs from "node:fs";
import net from "node:net";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { Bus } from "./bus";
import { ensureClientBuilt } from "./clientBuild";
import { configFromEnv, type AppConfig } from "./config";
import { openDatabase } from "./db/database";
import { startEmbeddedPostgres, type EmbeddedPostgres } from "./db/embeddedPostgres";
import { DEMO_PASSWORD, demoEmail, issueDemoNodeSecrets, seedDemo } from "./db/seed/demo";
import { setupBannerLines } from "./features/setup/announce";
import { prepareSetupToken } from "./features/setup/service";
import { createLogger } from "./logger";
import { loadOrCreateSecret } from "./secrets";
import { SupervisedChild } from "./supervisor";
import { claimLauncherLock, releaseLauncherLock } from "./launcherLock";

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
const HEALTH_TIMEOUT_MS = 120_000;
const HEALTH_POLL_MS = 250;
const BROKER_TIMEOUT_MS = 30_000;
/** One fake layout per demo layout, each named for its console prefix (at most 11 characters). */
const DEMO_FAKE_LAYOUTS = [
  { name: "kestrel", slug: "kestrel-bank", title: "Kestrel Bank" },
  { name: "wrenfold", slug: "wrenfold-loop", title: "Wrenfold Loop" },
];
const VITE_PORT = 5173;
const PARENT_CHECK_MS = 1_000;

const launchedAt = Date.now();
const elapsed = () => `${((Date.now() - launchedAt) / 1000).toFixed(1)} s`;
const say = (line: string) => process.stdout.write(`[launcher]    ${line}  (+${elapsed()})\n`);
const children: SupervisedChild[] = [];
let pg: EmbeddedPostgres | null = null;
let shuttingDown = false;
let lockDir: string | null = null;
/** Set while no account exists: the banner prints the setup link. */
let setupToken: string | null = null;

async function shutdown(reason: string, exitCode = 0): Promise<never> {
  if (shuttingDown) return new Promise<never>(() => {});
  shuttingDown = true;
  say(`stopping (${reason})`);
  for (const child of children) child.markStopping();
  // The broker's clients first, side by side, then the broker: a broker that goes first
  // makes every client log reconnect attempts on its way out.
  const stopAll = (group: SupervisedChild[]) =>
    Promise.all(group.map((child) => child.stop().catch((err: unknown) => say(`error while stopping ${child.name}: ${String(err)}`))));
  await stopAll(children.filter((child) => child.name !== "broker"));
  await stopAll(children.filter((child) => child.name === "broker"));
  if (pg) {
    try {
      pg.stop();
      say("PostgreSQL stopped");
    } catch (err) {
      say(`error while stopping PostgreSQL: ${String(err)}`);
      exitCode = 1;
    }
  }
  releaseLauncherLock(lockDir);
  process.exit(exitCode);
}

/**
 * Started by npm and npm is gone (killed without passing the signal on): stop, rather than
 * leave the servers and PostgreSQL running with nobody to stop them.
 */
function watchParent(): void {
  if (!process.env.npm_lifecycle_event) return;
  const parent = process.ppid;
  setInterval(() => {
    if (process.ppid !== parent) void shutdown("npm, which started the launcher, has gone");
  }, PARENT_CHECK_MS).unref();
}

function childEnv(config: AppConfig, databaseUrl: string, extra: NodeJS.ProcessEnv = {}): NodeJS.ProcessEnv {
  // Children write to a pipe, so they cannot see the terminal themselves: tell them whether a
  // person is reading (readable log lines) or a program (JSON lines).
  const pretty = process.stdout.isTTY ? { BLOCKLIGHT_PRETTY: "1" } : {};
  return { ...process.env, DATA_DIR: config.dataDir, DATABASE_URL: databaseUrl, BLOCKLIGHT_SUPERVISED: "1", ...pretty, ...extra };
}

function supervise(name: string, args: string[], env: NodeJS.ProcessEnv): SupervisedChild {
  const child = new SupervisedChild({
    name,
    args,
    env,
    cwd: ROOT,
    log: say,
    prefixWidth: 11,
    onGiveUp: (who) => void shutdown(`${who} keeps failing`, 1),
  });
  children.push(child);
  child.start();
  return child;
}

const nodeFile = (file: string, ...args: string[]) => ["--import", "tsx", path.join(ROOT, file), ...args];

function waitForPort(host: string, port: number, timeoutMs: number): Promise<boolean> {
  const deadline = Date.now() + timeoutMs;
  return new Promise((resolve) => {
    const attempt = () => {
      const socket = net.connect({ host, port });
      socket.once("connect", () => {
        socket.destroy();
        resolve(true);
      });
      socket.once("error", () => {
        socket.destroy();
        if (shuttingDown || Date.now() > deadline) resolve(false);
        else setTimeout(attempt, HEALTH_POLL_MS);
      });
    };
    attempt();
  });
}

/** Healthy enough to use: the server answers and its database is up (the broker may lag). */
async function waitForHealth(baseUrl: string, timeoutMs: number): Promise<boolean> {
  const deadline = Date.now() + timeoutMs;
  while (!shuttingDown && Date.now() < deadline) {
    try {
      const res = await fetch(`${baseUrl}/api/health`, { signal: AbortSignal.timeout(2_000) });
      const body = (await res.json()) as { db?: string };
      if (body.db === "up") return true;
    } catch {
      /* not listening yet */
    }
    await new Promise((resolve) => setTimeout(resolve, HEALTH_POLL_MS));
  }
  return false;
}

async function prepareDatabase(config: AppConfig): Promise<string> {
  let databaseUrl = config.databaseUrl;
  if (!databaseUrl) {
    // The launcher lock says no other launcher owns this DATA_DIR, so a cluster still running
    // here was left by a launcher that died: stop it rather than ask the user to.
    pg = await startEmbeddedPostgres({ dataDir: config.dataDir, port: config.pgPort, log: say, stopOrphan: true, guard: true });
    databaseUrl = pg.url;
    say(`embedded PostgreSQL is up on 127.0.0.1:${config.pgPort} (cluster in ${path.join(config.dataDir, "pg")})`);
  }
  const db = await openDatabase(databaseUrl, { poolMax: 2 });
  say("database migrated");
  try {
    if (config.demo) {
      const deps = { config, db, logger: createLogger(process.env.LOG_LEVEL ?? "warn"), bus: new Bus() };
      const seeded = await seedDemo(deps);
      const secrets = await issueDemoNodeSecrets(deps);
      const added = seeded.layoutsAdded.length ? `; layouts added: ${seeded.layoutsAdded.join(", ")}` : "";
      const issued = Object.entries(secrets.issued).map(([slug, nodes]) => `${slug} (${nodes.join(", ")})`);
      say(`demo data ready (Fernmoor Garden Railway Society${added || "; already seeded"})`);
      if (issued.length) say(`demo board secrets issued for ${issued.join("; ")} → ${path.join(config.dataDir, "secrets", "nodes")}`);
    }
    setupToken = await prepareSetupToken({ db, config });
  } finally {
    await db.close();
  }
  return databaseUrl;
}

async function main(): Promise<void> {
  process.on("SIGINT", () => void shutdown("SIGINT"));
  process.on("SIGTERM", () => void shutdown("SIGTERM"));
  process.on("uncaughtException", (err) => {
    say(`unexpected error: ${err.stack ?? err.message}`);
    void shutdown("unexpected error", 1);
  });

  watchParent();
  const config = configFromEnv(process.env, { demo: true });
  const dev = process.env.DEV === "1";
  // Made here, before any child runs, so the server and the broker read the same files
  // instead of racing to create them.
  fs.mkdirSync(config.dataDir, { recursive: true });
  const other = claimLauncherLock(config.dataDir);
  if (other !== null) {
    say(`another Blocklight launcher (pid ${other}) is running on ${config.dataDir}: stop it first, or set DATA_DIR to another folder`);
    process.exit(1);
  }
  lockDir = config.dataDir;
  if (process.argv.includes("--build")) ensureClientBuilt(ROOT, say);
  loadOrCreateSecret(config.dataDir, "session");
  loadOrCreateSecret(config.dataDir, "server-mqtt");

  const databaseUrl = await prepareDatabase(config);
  if (shuttingDown) return;
  const env = childEnv(config, databaseUrl);

  const mqttUrl = config.mqttUrl ?? `mqtt://127.0.0.1:${config.mqttPort}`;
  // Broker and server start side by side: the server's MQTT client retries until the
  // broker listens, and loading each child (tsx) is most of the start-up time.
  if (config.mqttUrl) {
    say(`using the external broker at ${config.mqttUrl}`);
  } else if (fs.existsSync(path.join(ROOT, "broker/index.ts"))) {
    say(`starting the broker on port ${config.mqttPort}`);
    supervise("broker", nodeFile("broker/index.ts"), env);
  } else {
    say("broker/index.ts is missing: starting without a broker (live control needs one)");
  }
  say("starting the server");
  supervise("server", nodeFile("server/index.ts"), env);
  if (dev) {
    supervise("vite", nodeFile("server/devClient.ts"), { ...env, VITE_PORT: String(VITE_PORT) });
  }

  const host = config.host === "0.0.0.0" || config.host === "::" ? "127.0.0.1" : config.host;
  const baseUrl = `http://${host}:${config.port}`;
  if (!(await waitForHealth(baseUrl, HEALTH_TIMEOUT_MS))) {
    if (!shuttingDown) await shutdown(`the server did not answer ${baseUrl}/api/health within ${HEALTH_TIMEOUT_MS / 1000} s`, 1);
    return;
  }

  if (config.demo) {
    const broker = new URL(mqttUrl);
    if (!(await waitForPort(broker.hostname, Number(broker.port || 1883), BROKER_TIMEOUT_MS)) && !shuttingDown) {
      say(`the broker at ${mqttUrl} is not answering yet; the fake layout will keep trying`);
    }
    for (const fake of DEMO_FAKE_LAYOUTS) {
      const scenario = path.join(ROOT, "broker/fakeLayout/scenarios", `${fake.slug}-day.json`);
      supervise(fake.name, nodeFile("broker/fakeLayout/cli.ts", "--layout", fake.slug, "--scenario", scenario, "--speed", "1", "--loop", "--broker", mqttUrl), env);
    }
  }

  // From process start, so the figure includes loading the launcher itself.
  const seconds = process.uptime().toFixed(1);
  const url = dev ? `http://127.0.0.1:${VITE_PORT}` : baseUrl;
  const running = [
    config.databaseUrl ? "PostgreSQL from DATABASE_URL" : `PostgreSQL on 127.0.0.1:${config.pgPort}`,
    config.mqttUrl ? `the broker at ${config.mqttUrl}` : `the broker on ${mqttUrl}`,
    `the server on ${baseUrl}`,
    ...(config.demo ? [`the fake layout (trains at ${DEMO_FAKE_LAYOUTS.map((fake) => fake.title).join(" and ")})`] : []),
    ...(dev ? [`Vite on ${url}`] : []),
  ];
  const lines = [
    "",
    `Blocklight is running at ${url}  (started in ${seconds} s; Ctrl-C stops it)`,
    `  running: ${running.join(", ")}`,
    ...(config.demo
      ? [
          `  demo accounts: ${demoEmail("admin")}, ${demoEmail("engineer")}, ${demoEmail("signaller")}, ${demoEmail("maintainer")}, ${demoEmail("viewer")}`,
          `    password "${DEMO_PASSWORD}" (public: never run a real layout with them; DEMO=off starts a real install)`,
        ]
      : []),
    ...setupBannerLines(url, setupToken, config.dataDir),
    "  Blocklight is an operating aid, not a certified interlocking: keep independent protection on passenger-carrying lines.",
    "",
  ];
  process.stdout.write(lines.join("\n") + "\n");
}

main().catch((err: unknown) => {
  say(`could not start: ${err instanceof Error ? err.message : String(err)}`);
  void shutdown("start-up failed", 1);
});
