/**
 * Runs Debian's PostgreSQL as a child cluster of the app (CONTRACT.md §1): installed with
 * apt-get when missing, cluster in `<dataDir>/pg`, on 127.0.0.1:<port>, as the non-root
 * `postgres` OS user (postgres refuses to run as root), reused on later starts.
 *
 * Traps handled (STACK.md): a killed postmaster can stay a zombie because PID 1 here does
 * not reap, so liveness is read from /proc rather than trusted from `pg_ctl status`, and
 * stale `postmaster.pid` / socket lock files are cleared before starting.
 */
import { execFileSync, spawn, spawnSync } from "node:child_process";
import { randomBytes } from "node:crypto";
import fs from "node:fs";
import net from "node:net";
import path from "node:path";

export interface EmbeddedPostgresOptions {
  dataDir: string;
  port: number;
  /** Faster, unsafe settings for throwaway test clusters; never for `npm start`. */
  ephemeral?: boolean;
  log?: (message: string) => void;
  /**
   * A postmaster of this cluster left running by an earlier start whose owner is gone
   * (the launcher was killed): stop it and start afresh instead of refusing. The caller
   * decides that the owner is gone (the launcher keeps a pid file in DATA_DIR).
   */
  stopOrphan?: boolean;
  /**
   * Also stop the cluster when this process dies without calling stop() (`kill -9`): a
   * small guard process waits for this process's end and then runs `pg_ctl stop`.
   */
  guard?: boolean;
}

export interface EmbeddedPostgres {
  /** Connection URL of the `blocklight` database (created on first start). */
  url: string;
  /** URL of the maintenance database, for tests that create databases of their own. */
  adminUrl: string;
  stop(): void;
}

const OS_USER = "postgres";
const DATABASE = "blocklight";

export class PortInUseError extends Error {
  constructor(port: number) {
    super(`port ${port} is already in use on 127.0.0.1: set PG_PORT to a free port, or DATABASE_URL to use another PostgreSQL`);
  }
}

/** The directory holding initdb/pg_ctl: `pg_config --bindir`, else the newest /usr/lib/postgresql/N/bin. */
export function findPostgresBinDir(): string | null {
  const versions = fs.existsSync("/usr/lib/postgresql")
    ? fs
        .readdirSync("/usr/lib/postgresql")
        .filter((v) => fs.existsSync(`/usr/lib/postgresql/${v}/bin/initdb`))
        .sort((a, b) => Number(b) - Number(a))
    : [];
  if (versions.length > 0) return `/usr/lib/postgresql/${versions[0]}/bin`;
  const probe = spawnSync("pg_config", ["--bindir"], { encoding: "utf8" });
  const dir = probe.status === 0 ? probe.stdout.trim() : "";
  return dir && fs.existsSync(path.join(dir, "initdb")) ? dir : null;
}

function installPostgres(log: (m: string) => void): string {
  log("PostgreSQL not found: installing Debian's postgresql package with apt-get (first run only)…");
  execFileSync("apt-get", ["update", "-qq"], { stdio: "inherit" });
  execFileSync("apt-get", ["install", "-y", "-qq", "postgresql"], {
    stdio: "inherit",
    env: { ...process.env, DEBIAN_FRONTEND: "noninteractive" },
  });
  const dir = findPostgresBinDir();
  if (!dir) throw new Error("apt-get installed postgresql but initdb was not found");
  return dir;
}

function ensureOsUser(): void {
  if (spawnSync("id", ["-u", OS_USER]).status === 0) return;
  execFileSync("useradd", ["--system", "--no-create-home", "--shell", "/usr/sbin/nologin", OS_USER]);
}

/** Runs a PostgreSQL tool as the postgres OS user (or directly when we are not root). */
function runAs(
  bin: string,
  args: string[],
  opts: { allowFail?: boolean; password?: string } = {},
): { status: number; out: string } {
  const asRoot = process.getuid?.() === 0;
  const cmd = asRoot ? "runuser" : bin;
  const fullArgs = asRoot ? ["-u", OS_USER, "--", bin, ...args] : args;
  const env = opts.password ? { ...process.env, PGPASSWORD: opts.password } : process.env;
  const res = spawnSync(cmd, fullArgs, { cwd: "/", encoding: "utf8", env });
  const out = `${res.stdout ?? ""}${res.stderr ?? ""}`;
  if (res.status !== 0 && !opts.allowFail) throw new Error(`${path.basename(bin)} failed: ${out.trim()}`);
  return { status: res.status ?? 1, out };
}

/** True when the process exists and is not a zombie. */
function processAlive(pid: number): boolean {
  try {
    const stat = fs.readFileSync(`/proc/${pid}/stat`, "utf8");
    const state = stat.slice(stat.lastIndexOf(")") + 2, stat.lastIndexOf(")") + 3);
    if (state === "Z") return false;
    return fs.readFileSync(`/proc/${pid}/cmdline`, "utf8").includes("postgres");
  } catch {
    return false;
  }
}

function postmasterPid(clusterDir: string): number | null {
  const pidFile = path.join(clusterDir, "postmaster.pid");
  if (!fs.existsSync(pidFile)) return null;
  const pid = Number(fs.readFileSync(pidFile, "utf8").split("\n")[0]);
  return Number.isInteger(pid) && pid > 0 ? pid : null;
}

function clearStaleLocks(clusterDir: string, socketDir: string, port: number): void {
  fs.rmSync(path.join(clusterDir, "postmaster.pid"), { force: true });
  fs.rmSync(path.join(socketDir, `.s.PGSQL.${port}`), { force: true });
  fs.rmSync(path.join(socketDir, `.s.PGSQL.${port}.lock`), { force: true });
}

export function isPortFree(port: number, host = "127.0.0.1"): Promise<boolean> {
  return new Promise((resolve) => {
    const server = net.createServer();
    server.once("error", () => resolve(false));
    server.listen(port, host, () => server.close(() => resolve(true)));
  });
}

/** Asks the OS for a free TCP port on loopback. */
export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const server = net.createServer();
    server.once("error", reject);
    server.listen(0, "127.0.0.1", () => {
      const { port } = server.address() as net.AddressInfo;
      server.close(() => resolve(port));
    });
  });
}

/** Every parent of the cluster must be traversable by the postgres user. */
function makeTraversable(dir: string): void {
  let current = path.resolve(dir);
  while (current !== path.dirname(current)) {
    try {
      const mode = fs.statSync(current).mode;
      if ((mode & 0o001) === 0) fs.chmodSync(current, mode | 0o001);
    } catch {
      /* a parent we cannot change: initdb will say so clearly */
    }
    current = path.dirname(current);
  }
}

export async function startEmbeddedPostgres(options: EmbeddedPostgresOptions): Promise<EmbeddedPostgres> {
  const log = options.log ?? (() => {});
  const binDir = findPostgresBinDir() ?? installPostgres(log);
  const asRoot = process.getuid?.() === 0;
  if (asRoot) ensureOsUser();
  const bin = (tool: string) => path.join(binDir, tool);

  const clusterDir = path.resolve(options.dataDir, "pg");
  const socketDir = path.resolve(options.dataDir, "pg-socket");
  fs.mkdirSync(clusterDir, { recursive: true });
  fs.mkdirSync(socketDir, { recursive: true });
  if (asRoot) {
    makeTraversable(clusterDir);
    execFileSync("chown", ["-R", `${OS_USER}:`, clusterDir, socketDir]);
    fs.chmodSync(clusterDir, 0o700);
  }

  const running = postmasterPid(clusterDir);
  if (running !== null && processAlive(running)) {
    if (!options.stopOrphan) {
      throw new Error(`a PostgreSQL (pid ${running}) is already running on ${clusterDir}: is another Blocklight running?`);
    }
    log(`stopping the PostgreSQL (pid ${running}) an earlier start left running on ${clusterDir}`);
    runAs(bin("pg_ctl"), ["-D", clusterDir, "-m", "fast", "-w", "-t", "30", "stop"], { allowFail: true });
  }
  clearStaleLocks(clusterDir, socketDir, options.port);
  if (!(await isPortFree(options.port))) throw new PortInUseError(options.port);

  // The superuser password lives beside the cluster, readable by the app's user only; TCP
  // logins need it, so other local users cannot walk into the database.
  const passwordFile = path.resolve(options.dataDir, "pg-password");
  if (!fs.existsSync(path.join(clusterDir, "PG_VERSION"))) {
    log(`creating PostgreSQL cluster in ${clusterDir}`);
    fs.writeFileSync(passwordFile, randomBytes(18).toString("base64url"), { mode: 0o600 });
    const pwTmp = path.join(socketDir, "initdb-pw");
    fs.writeFileSync(pwTmp, fs.readFileSync(passwordFile), { mode: 0o600 });
    if (asRoot) execFileSync("chown", [`${OS_USER}:`, pwTmp]);
    try {
      runAs(bin("initdb"), [
        "-D", clusterDir, "-U", "postgres", `--pwfile=${pwTmp}`,
        "--auth-host=scram-sha-256", "--auth-local=peer", "--encoding=UTF8", "--no-instructions",
      ]);
    } finally {
      fs.rmSync(pwTmp, { force: true });
    }
  }
  const password = fs.readFileSync(passwordFile, "utf8").trim();

  const serverOptions = [
    `-c listen_addresses=127.0.0.1`,
    `-c port=${options.port}`,
    `-c unix_socket_directories=${socketDir}`,
    ...(options.ephemeral ? ["-c fsync=off", "-c synchronous_commit=off", "-c full_page_writes=off"] : []),
  ].join(" ");
  runAs(bin("pg_ctl"), ["-D", clusterDir, "-o", serverOptions, "-l", path.join(clusterDir, "server.log"), "-w", "-t", "60", "start"]);

  const auth = `postgres:${encodeURIComponent(password)}@127.0.0.1:${options.port}`;
  const adminUrl = `postgres://${auth}/postgres`;
  const connect = ["-h", "127.0.0.1", "-p", String(options.port), "-U", "postgres"];
  const exists = runAs(bin("psql"), [...connect, "-tAc", `SELECT 1 FROM pg_database WHERE datname='${DATABASE}'`], { password });
  if (exists.out.trim() !== "1") runAs(bin("createdb"), [...connect, DATABASE], { password });

  const guard = options.guard ? startStopGuard(asRoot, bin("pg_ctl"), clusterDir) : null;
  let stopped = false;
  const stop = () => {
    if (stopped) return;
    stopped = true;
    process.removeListener("exit", stop);
    guard?.disarm();
    runAs(bin("pg_ctl"), ["-D", clusterDir, "-m", "fast", "-w", "-t", "30", "stop"], { allowFail: true });
  };
  // A process that exits without calling stop() (an error, process.exit) must not leave a
  // postmaster behind; stopping is synchronous, so it can run in the exit handler.
  process.once("exit", stop);
  return { url: `postgres://${auth}/${DATABASE}`, adminUrl, stop };
}

/**
 * `sh` reads a pipe from this process that is never written to; the kernel closes it when this
 * process ends however it ends, and then `sh` stops the cluster. The guard runs in a process
 * group of its own, so a Ctrl-C meant for us does not fire it early; `disarm()` (a clean stop,
 * which stops the cluster itself) kills the group.
 */
function startStopGuard(asRoot: boolean, pgCtl: string, clusterDir: string): { disarm(): void } {
  const stopCommand = [...(asRoot ? ["runuser", "-u", OS_USER, "--"] : []), pgCtl, "-D", clusterDir, "-m", "fast", "-w", "-t", "30", "stop"];
  const child = spawn("sh", ["-c", 'cat >/dev/null; exec "$@" >/dev/null 2>&1', "blocklight-pg-guard", ...stopCommand], {
    cwd: "/",
    detached: true,
    stdio: ["pipe", "ignore", "ignore"],
  });
  child.unref();
  (child.stdin as unknown as { unref?: () => void }).unref?.();
  return {
    disarm() {
      try {
        if (child.pid) process.kill(-child.pid, "SIGKILL");
      } catch {
        /* already gone */
      }
    },
  };
}
