/**
 * The broker as its own process, so restarting the server does not drop the boards: the
 * server's persistent MQTT session (clean session off) keeps its QoS 1 pulses queued here.
 *
 * Environment: DATABASE_URL (required: node secrets are checked against it), MQTT_PORT
 * (default 1883), MQTT_HOST (default 127.0.0.1), SERVER_MQTT_USERNAME / SERVER_MQTT_PASSWORD
 * (the password defaults to DATA_DIR/secrets/server-mqtt, made on first start, the same file
 * the server reads).
 */
import pg from "pg";
import { configFromEnv } from "../server/config";
import { createLogger } from "../server/logger";
import { loadOrCreateSecret } from "../server/secrets";
import { loggableIdentity } from "./acl";
import { databaseAuthenticator } from "./auth";
import { watchNodeCredentials } from "./credentialWatch";
import { startBroker } from "./server";
import { stopWhenLauncherGoes } from "../server/parentWatch";

const logger = createLogger();

async function main(): Promise<void> {
  const config = configFromEnv(process.env);
  if (!config.databaseUrl) throw new Error("DATABASE_URL must be set: the broker checks node secrets against the database");
  // Read at every server login: the server may create the same file at the same moment on a
  // first start, and whichever write lands last is the one both sides use.
  const serverPassword = () => config.serverMqttPassword || loadOrCreateSecret(config.dataDir, "server-mqtt");
  serverPassword();
  const pool = new pg.Pool({ connectionString: config.databaseUrl, max: 5 });
  pool.on("error", (err) => logger.warn({ err }, "database connection lost; the next login reconnects"));
  const broker = await startBroker({
    port: config.mqttPort,
    host: process.env.MQTT_HOST ?? "127.0.0.1",
    authenticate: databaseAuthenticator({ pool, serverUsername: config.serverMqttUsername, serverPassword }),
    onRefusal: (refusal) => logger.warn(refusal, "MQTT refused"),
    onClient: (event, clientId, identity) => logger.info({ clientId, identity: loggableIdentity(identity) }, `MQTT client ${event}`),
  });
  // One pool connection stays with the LISTEN of re-issued and removed board secrets.
  const credentials = watchNodeCredentials({ pool, broker, onError: (err) => logger.warn({ err }, "watching board secrets: retrying") });
  logger.info({ port: broker.port }, "MQTT broker is up");

  let stopping = false;
  const stop = async (signal: string) => {
    if (stopping) return;
    stopping = true;
    logger.info({ signal }, "stopping the MQTT broker");
    await credentials.stop();
    await broker.close();
    await pool.end();
    process.exit(0);
  };
  process.on("SIGINT", () => void stop("SIGINT"));
  process.on("SIGTERM", () => void stop("SIGTERM"));
  stopWhenLauncherGoes(stop);
}

main().catch((err) => {
  process.stderr.write(`the MQTT broker could not start: ${err instanceof Error ? err.message : String(err)}\n`);
  process.exit(1);
});
