/**
 * Zero loss and fail-safe under faults (`npm run bench -- faults`), with the broker and the
 * server as child processes (tests/support/faultRig.ts) on a PostgreSQL of its own with
 * durable settings, two reference boards streaming numbered pulses:
 *
 * - `faults.<kind>.<rate>.sent / applied / applied_twice / out_of_order` for each fault at 300
 *   and 800 pulses/s: server SIGKILL, broker SIGKILL, both 2 s apart, PostgreSQL stopped 5 s,
 *   a board rebooting (its old boot's uncovered messages are its own loss: `applied` counts
 *   the new boot and the old boot's applied prefix, `sent` what the server could know of);
 * - `live.pulse_to_applied_ms` p50/p99 at 500/s beside `mqtt.round_trip_ms` and
 *   `pg.commit_ms` measured in the same run;
 * - `live.restart_to_first_applied_ms`: from starting the server process to the first pulse
 *   sent after that being confirmed;
 * - `failsafe.server_killed_to_board_danger_ms`, `failsafe.db_frozen_to_board_danger_ms`.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import mqtt from "mqtt";
import pg from "pg";
import type { ReferenceBoard } from "../../broker/referenceBoard";
import { Bus } from "../../server/bus";
import { configFromEnv } from "../../server/config";
import { openDatabase } from "../../server/db/database";
import { freePort, startEmbeddedPostgres, type EmbeddedPostgres } from "../../server/db/embeddedPostgres";
import type { AppDeps } from "../../server/deps";
import { importLayout, registerNode } from "../../server/features/layouts/service";
import { createLogger } from "../../server/logger";
import { countingLayout, FaultRig, stream } from "../support/faultRig";
import { durableCommitTimes } from "./durableCommit";

type Report = (name: string, value: number, unit: string) => void;

const RATES = [300, 800];
const FAULT_SECONDS = 3;
const COVER_TIMEOUT_MS = 40_000;
const LATENCY_RATE = 500;
const LATENCY_SECONDS = 4;
const SAMPLES = 500;
const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

function quantile(values: number[], q: number): number {
  if (values.length === 0) return Number.NaN;
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[Math.min(sorted.length - 1, Math.floor(q * sorted.length))];
}

async function untilTrue(check: () => boolean | Promise<boolean>, timeoutMs: number): Promise<boolean> {
  const deadline = Date.now() + timeoutMs;
  while (!(await check())) {
    if (Date.now() > deadline) return false;
    await sleep(10);
  }
  return true;
}

/** The PIDs of a running cluster: the postmaster and every process it started. */
function clusterPids(dataDir: string): number[] {
  const master = Number(fs.readFileSync(path.join(dataDir, "pg", "postmaster.pid"), "utf8").split("\n")[0]);
  const pids = [master];
  for (const entry of fs.readdirSync("/proc")) {
    if (!/^\d+$/.test(entry)) continue;
    try {
      const stat = fs.readFileSync(`/proc/${entry}/stat`, "utf8");
      const ppid = Number(stat.slice(stat.lastIndexOf(")") + 2).split(" ")[1]);
      if (ppid === master) pids.push(Number(entry));
    } catch {
      /* gone */
    }
  }
  return pids;
}

export async function run(report: Report): Promise<void> {
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), "blocklight-bench-faults-"));
  const pgPort = await freePort();
  let cluster: EmbeddedPostgres = await startEmbeddedPostgres({ dataDir, port: pgPort });
  const db = await openDatabase(cluster.url, { poolMax: 2 });
  const deps: AppDeps = { config: { ...configFromEnv({}), sessionSecret: "bench", serveClient: false }, db, logger: createLogger("silent"), bus: new Bus() };
  await importLayout(deps, countingLayout(2), null);
  const secrets = new Map<string, string>();
  for (const i of [1, 2]) {
    const { secret } = await registerNode(deps, countingLayout(2).slug, { id: `counter-${i}`, name: `Counter board ${i}`, detectors: [`C${i}`], signals: i === 1 ? ["S1"] : [] });
    secrets.set(`counter-${i}`, secret);
  }
  await db.close();
  const check = new pg.Pool({ connectionString: cluster.url, max: 2 });
  check.on("error", () => {});
  const rig = new FaultRig({ databaseUrl: cluster.url, secrets });
  try {
    await rig.startBroker();
    await rig.startServer();

    /** sent / applied / applied twice / out of order for one boot, from the log. */
    const tally = async (boot: string) => {
      const { rows } = await check.query<{ seq: number }>(`SELECT seq::int AS seq FROM events WHERE kind = 'pulse' AND boot = $1 AND status = 'accepted' ORDER BY id`, [boot]);
      const seqs = rows.map((r) => r.seq);
      let outOfOrder = 0;
      seqs.forEach((seq, i) => {
        if (seq !== (i === 0 ? 1 : seqs[i - 1] + 1)) outOfOrder++;
      });
      return { applied: new Set(seqs).size, twice: seqs.length - new Set(seqs).size, outOfOrder };
    };
    const covered = (board: ReferenceBoard) => untilTrue(() => board.uncovered === 0, COVER_TIMEOUT_MS);

    const stopDatabase = async () => {
      cluster.stop();
    };
    const startDatabase = async () => {
      cluster = await startEmbeddedPostgres({ dataDir, port: pgPort });
    };
    const kinds: { kind: string; hooks: { atMs: number; run: () => Promise<void> | void }[]; reboot?: boolean }[] = [
      { kind: "server_kill", hooks: [{ atMs: 1_000, run: () => rig.kill("server") }, { atMs: 1_100, run: () => rig.startServer() }] },
      { kind: "broker_kill", hooks: [{ atMs: 1_000, run: () => rig.kill("broker") }, { atMs: 1_500, run: () => rig.startBroker() }] },
      {
        kind: "server_then_broker",
        hooks: [
          { atMs: 500, run: () => rig.kill("server") },
          { atMs: 2_500, run: () => rig.kill("broker") },
          { atMs: 2_700, run: async () => void (await Promise.all([rig.startBroker(), rig.startServer()])) },
        ],
      },
      { kind: "db_stopped_5s", hooks: [{ atMs: 500, run: stopDatabase }, { atMs: 5_500, run: startDatabase }] },
      { kind: "board_reboot", hooks: [], reboot: true },
    ];

    for (const rate of RATES) {
      for (const { kind, hooks, reboot } of kinds) {
        const boards = [rig.board("counter-1"), rig.board("counter-2")];
        await Promise.all(boards.map((b) => b.start()));
        let oldBoot = "";
        let oldSent = 0;
        const all = reboot
          ? [
              {
                atMs: 1_000,
                run: () => {
                  oldBoot = boards[0].boot;
                  oldSent = boards[0].seq;
                  boards[0].reboot();
                },
              },
            ]
          : hooks;
        const sentPerBoard = await stream(
          boards.map((board, i) => ({ board, detector: `C${i + 1}` })),
          rate,
          FAULT_SECONDS,
          all,
        );
        await Promise.all(boards.map(covered));
        let sent = 0;
        let applied = 0;
        let twice = 0;
        let outOfOrder = 0;
        for (const [i, board] of boards.entries()) {
          const t = await tally(board.boot);
          sent += reboot && i === 0 ? board.seq : sentPerBoard[i];
          applied += t.applied;
          twice += t.twice;
          outOfOrder += t.outOfOrder;
        }
        if (reboot) {
          // The old boot: what reached the server is its applied prefix; the rest the board lost itself.
          const t = await tally(oldBoot);
          sent += t.applied;
          applied += t.applied;
          twice += t.twice;
          outOfOrder += t.outOfOrder;
          report(`faults.${kind}.${rate}.lost_with_old_boot`, oldSent - t.applied, "pulses");
        }
        report(`faults.${kind}.${rate}.sent`, sent, "pulses");
        report(`faults.${kind}.${rate}.applied`, applied, "pulses");
        report(`faults.${kind}.${rate}.applied_twice`, twice, "pulses");
        report(`faults.${kind}.${rate}.out_of_order`, outOfOrder, "pulses");
        await Promise.all(boards.map((b) => b.end()));
      }
    }

    // ── latency at 500/s, with the two floors measured in the same run ──
    const sentAt = new Map<number, number>();
    const latencies: number[] = [];
    let timedUpTo = 0;
    const timed = rig.board("counter-2", {
      onApplied: (seq) => {
        const now = performance.now();
        for (let s = timedUpTo + 1; s <= seq; s++) {
          const at = sentAt.get(s);
          if (at !== undefined) latencies.push(now - at);
          sentAt.delete(s);
        }
        timedUpTo = Math.max(timedUpTo, seq);
      },
    });
    await timed.start();
    const origPulse = timed.pulse.bind(timed);
    timed.pulse = (detector: string) => {
      sentAt.set(timed.seq + 1, performance.now());
      return origPulse(detector);
    };
    await stream([{ board: timed, detector: "C2" }], LATENCY_RATE, LATENCY_SECONDS);
    await covered(timed);
    report("live.pulse_to_applied_ms.p50", quantile(latencies, 0.5), "ms");
    report("live.pulse_to_applied_ms.p99", quantile(latencies, 0.99), "ms");

    const probe = await mqtt.connectAsync(rig.mqttUrl, { protocolVersion: 4, username: "blocklight-server", password: rig.serverPassword, clientId: "blocklight-server.bench-rtt" });
    // As the server and the boards do: no Nagle delay on small packets.
    (probe.stream as { setNoDelay?: (on: boolean) => void }).setNoDelay?.(true);
    const rtt: number[] = [];
    await probe.subscribeAsync("blocklight/v1/bench-rtt/probe", { qos: 1 });
    for (let i = 0; i < SAMPLES; i++) {
      const started = performance.now();
      const got = new Promise<void>((resolve) => probe.once("message", () => resolve()));
      await probe.publishAsync("blocklight/v1/bench-rtt/probe", String(i), { qos: 1 });
      await got;
      rtt.push(performance.now() - started);
    }
    await probe.endAsync();
    report("mqtt.round_trip_ms.p50", quantile(rtt, 0.5), "ms");
    report("mqtt.round_trip_ms.p99", quantile(rtt, 0.99), "ms");
    const commits = await durableCommitTimes(check, SAMPLES);
    report("pg.commit_ms.p50", quantile(commits, 0.5), "ms");
    report("pg.commit_ms.p99", quantile(commits, 0.99), "ms");

    // ── server restart: from spawning it to the first new pulse confirmed ──
    await rig.kill("server");
    const seqAtStart = timed.seq;
    const restarted = performance.now();
    let firstApplied = Number.NaN;
    const ticker = setInterval(() => void timed.pulse("C2"), 20);
    const up = rig.startServer();
    await untilTrue(() => timedUpTo > seqAtStart, 60_000);
    firstApplied = performance.now() - restarted;
    clearInterval(ticker);
    await up;
    report("live.restart_to_first_applied_ms", firstApplied, "ms");

    // ── fail-safe: how soon the board shows danger ──
    const board = rig.board("counter-1");
    await board.start();
    await untilTrue(() => board.shown.get("S1") === "clear", 20_000);
    let t0 = performance.now();
    await rig.kill("server");
    await untilTrue(() => board.shown.get("S1") === "danger", 10_000);
    report("failsafe.server_killed_to_board_danger_ms", performance.now() - t0, "ms");
    await rig.startServer();
    await untilTrue(() => board.shown.get("S1") === "clear", 20_000);
    const pulsing = setInterval(() => void board.pulse("C1"), 20);
    await sleep(500);
    const frozen = clusterPids(dataDir);
    t0 = performance.now();
    for (const pid of frozen) process.kill(pid, "SIGSTOP");
    await untilTrue(() => board.shown.get("S1") === "danger", 10_000);
    report("failsafe.db_frozen_to_board_danger_ms", performance.now() - t0, "ms");
    for (const pid of frozen) process.kill(pid, "SIGCONT");
    clearInterval(pulsing);
    await covered(board);
    await Promise.all([board.end(), timed.end()]);
  } finally {
    await rig.close();
    await check.end().catch(() => {});
    cluster.stop();
    fs.rmSync(dataDir, { recursive: true, force: true });
  }
}
