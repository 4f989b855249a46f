/**
 * One server process: PostgreSQL (embedded unless DATABASE_URL is set), migrations, demo
 * seed, the live runtime, mail, sockets and the HTTP server, all stopped on Ctrl-C/SIGTERM.
 * `npm start` runs it under server/launcher.ts, which owns PostgreSQL and the broker; it
 * also runs on its own (`node --import tsx server/index.ts`).
 */
import http from "node:http";
import { Bus } from "./bus";
import { configFromEnv } from "./config";
import { createApp } from "./app";
import { openDatabase, type Database } from "./db/database";
import { startEmbeddedPostgres, type EmbeddedPostgres } from "./db/embeddedPostgres";
import { seedDemo } from "./db/seed/demo";
import type { AppDeps } from "./deps";
import { attachLiveSocket } from "./features/live/socket";
import { attachProofSocket } from "./features/prove/socket";
import { closeProofJobs } from "./features/prove/service";
import { startAlarmWatchers } from "./features/alarms/watchRunner";
import { startBoardRollCall } from "./features/alarms/boardRollCall";
import { allStoredAlarmSettings } from "./features/alarms/settings";
import { startAlarmMail } from "./features/mail/alarmMail";
import { startMailer } from "./features/mail/service";
import { setupBannerLines } from "./features/setup/announce";
import { prepareSetupToken } from "./features/setup/service";
import { createLogger } from "./logger";
import { startLiveRuntime } from "./runtime/liveRuntime";
import { runtimeDeps } from "./runtimeDeps";
import { stopWhenLauncherGoes } from "./parentWatch";
import { loadOrCreateSecret } from "./secrets";

const SHUTDOWN_GRACE_MS = 5_000;

const logger = createLogger();
/** Run in reverse order on the way out, whether start-up finished or not. */
const cleanups: (() => Promise<void> | void)[] = [];
let shuttingDown = false;

async function shutdown(reason: string, exitCode = 0): Promise<void> {
  if (shuttingDown) return;
  shuttingDown = true;
  logger.info({ reason }, "stopping Blocklight");
  const timer = setTimeout(() => process.exit(1), SHUTDOWN_GRACE_MS + 30_000);
  for (const cleanup of cleanups.reverse()) {
    try {
      await cleanup();
    } catch (err) {
      logger.error({ err }, "error while stopping");
    }
  }
  clearTimeout(timer);
  process.exit(exitCode);
}

async function main(): Promise<void> {
  const startedAt = Date.now();
  process.on("SIGINT", () => void shutdown("SIGINT"));
  process.on("SIGTERM", () => void shutdown("SIGTERM"));
  stopWhenLauncherGoes(shutdown);
  const config = configFromEnv(process.env, { demo: true });
  config.sessionSecret ||= loadOrCreateSecret(config.dataDir, "session");
  config.serverMqttPassword ||= loadOrCreateSecret(config.dataDir, "server-mqtt");

  let pg: EmbeddedPostgres | null = null;
  let databaseUrl = config.databaseUrl;
  if (!databaseUrl) {
    pg = await startEmbeddedPostgres({ dataDir: config.dataDir, port: config.pgPort, log: (m) => logger.info(m) });
    cleanups.push(() => pg!.stop());
    databaseUrl = pg.url;
    logger.info({ port: config.pgPort, dataDir: config.dataDir }, "embedded PostgreSQL is up");
  }
  const db: Database = await openDatabase(databaseUrl);
  cleanups.push(() => db.close());

  const deps: AppDeps = { config, db, logger, bus: new Bus() };
  // Under the launcher the demo is already seeded (and said so) before any child starts.
  if (config.demo && !process.env.BLOCKLIGHT_SUPERVISED) {
    const seeded = await seedDemo(deps);
    logger.info(seeded, "demo data ready (Fernmoor Garden Railway Society)");
  }

  // The broker runs in its own process (started by the launcher) unless MQTT_URL names another.
  const mqttUrl = config.mqttUrl ?? `mqtt://127.0.0.1:${config.mqttPort}`;
  const live = await startLiveRuntime({
    deps: runtimeDeps(deps),
    db,
    mqtt: { url: mqttUrl, username: config.serverMqttUsername, password: config.serverMqttPassword },
  });
  deps.live = live;
  deps.broker = live;
  cleanups.push(() => live.stop());

  // Mail (SMTP_URL, or a local fake server whose mail admins read at /admin/outbox) and the
  // alarm watchers that feed on the live pipeline's committed updates.
  deps.mail = await startMailer(deps);
  cleanups.push(() => deps.mail!.close());
  logger.info({ mail: deps.mail.describe() }, "mail ready");
  const alarmMail = startAlarmMail(deps);
  // Each layout's alarm settings at start, and every change from the settings page at once.
  const watchers = startAlarmWatchers(deps, { layoutSettings: await allStoredAlarmSettings(deps) });
  const onSettings = ({ slug, settings }: { slug: string; settings: Parameters<typeof watchers.setSettings>[1] }) => watchers.setSettings(slug, settings);
  deps.bus.on("alarm-settings.changed", onSettings);
  const rollCall = startBoardRollCall(deps);
  cleanups.push(async () => {
    deps.bus.off("alarm-settings.changed", onSettings);
    rollCall.stop();
    await watchers.stop();
    alarmMail.stop();
  });

  const app = createApp(deps);
  const server = http.createServer(app);
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(config.port, config.host, resolve);
  });
  cleanups.push(() => new Promise<void>((resolve) => server.close(() => resolve())));
  const sockets = attachLiveSocket(server, deps);
  cleanups.push(() => sockets.close());
  const proofSockets = attachProofSocket(sockets.io, deps);
  cleanups.push(async () => {
    proofSockets.close();
    await closeProofJobs(deps);
  });
  const url = `http://${config.host}:${config.port}`;
  logger.info({ url, startupMs: Date.now() - startedAt }, "Blocklight is up");
  // Under the launcher, the launcher prints the one banner people should read.
  if (!process.env.BLOCKLIGHT_SUPERVISED) {
    const setup = setupBannerLines(url, await prepareSetupToken(deps), config.dataDir);
    process.stdout.write(`\nBlocklight is running at ${url}  (started in ${((Date.now() - startedAt) / 1000).toFixed(1)} s; Ctrl-C stops it)\n${setup.map((l) => l + "\n").join("")}\n`);
  }
}

main().catch((err) => {
  process.stderr.write(`Blocklight could not start: ${err instanceof Error ? err.message : String(err)}\n`);
  void shutdown("start-up failed", 1);
});
