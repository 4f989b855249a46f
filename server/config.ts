/**
 * Process configuration from the environment (CONTRACT.md §1), read once at start-up.
 * Nothing else in the server reads process.env, so tests can build a config by hand.
 */
import { randomBytes } from "node:crypto";
import path from "node:path";

export interface AppConfig {
  host: string;
  port: number;
  mqttPort: number;
  /** External broker; when set no embedded broker is started. */
  mqttUrl: string | null;
  databaseUrl: string | null;
  dataDir: string;
  pgPort: number;
  demo: boolean;
  smtpUrl: string | null;
  /** Signs session cookies; a random one per data directory unless SESSION_SECRET is set. */
  sessionSecret: string;
  /** Credentials of the server's own MQTT client (CONTRACT.md §2). */
  serverMqttUsername: string;
  serverMqttPassword: string;
  /** Serve the built client from dist/ (off in tests that only use the API). */
  serveClient: boolean;
  /** Cookies marked Secure only when served over HTTPS by a proxy. */
  secureCookies: boolean;
  /**
   * Express's `trust proxy` (TRUST_PROXY): unset = trust no proxy, so a client's own
   * X-Forwarded-For never changes the address the sign-in limit counts. A number of hops, or
   * addresses/subnets such as `loopback` or `10.0.0.1`, when a reverse proxy is in front.
   */
  trustProxy: number | string | null;
  /** Sign-in attempts allowed per address per window. */
  loginLimitPerWindow: number;
  loginWindowMs: number;
}

function intFrom(value: string | undefined, fallback: number, name: string): number {
  if (value === undefined || value === "") return fallback;
  const n = Number(value);
  if (!Number.isInteger(n) || n < 0 || n > 65535) throw new Error(`${name} must be a whole number from 0 to 65535, got "${value}"`);
  return n;
}

function trustProxyFrom(value: string | undefined): number | string | null {
  if (value === undefined || value.trim() === "") return null;
  return /^\d+$/.test(value.trim()) ? Number(value.trim()) : value.trim();
}

export function configFromEnv(env: NodeJS.ProcessEnv = process.env, defaults: { demo?: boolean } = {}): AppConfig {
  const dataDir = path.resolve(env.DATA_DIR ?? ".data");
  return {
    host: env.HOST ?? "127.0.0.1",
    port: intFrom(env.PORT, 8080, "PORT"),
    mqttPort: intFrom(env.MQTT_PORT, 1883, "MQTT_PORT"),
    mqttUrl: env.MQTT_URL || null,
    databaseUrl: env.DATABASE_URL || null,
    dataDir,
    pgPort: intFrom(env.PG_PORT, 54329, "PG_PORT"),
    demo: env.DEMO ? env.DEMO !== "off" : (defaults.demo ?? true),
    smtpUrl: env.SMTP_URL || null,
    sessionSecret: env.SESSION_SECRET ?? "",
    serverMqttUsername: env.SERVER_MQTT_USERNAME ?? "blocklight-server",
    serverMqttPassword: env.SERVER_MQTT_PASSWORD ?? "",
    serveClient: true,
    secureCookies: env.SECURE_COOKIES === "on",
    trustProxy: trustProxyFrom(env.TRUST_PROXY),
    loginLimitPerWindow: intFrom(env.LOGIN_LIMIT, 10, "LOGIN_LIMIT"),
    loginWindowMs: 60_000,
  };
}

export function randomSecret(bytes = 32): string {
  return randomBytes(bytes).toString("base64url");
}
