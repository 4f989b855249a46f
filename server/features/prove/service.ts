/**
 * Proof jobs for stored rulebook versions: started by an engineer, run in the worker pool,
 * followed over socket.io (or by polling), cancellable, and stored on the version when they
 * end. A version moves draft → proved when every property holds; a refuted proof puts a
 * "proved" version back to draft; a published version's status never changes here.
 *
 * Jobs live in this process's memory: a restart forgets running jobs (the stored proofs
 * stay). One registry per `deps`, so each test app has its own.
 */
import { EventEmitter } from "node:events";
import { randomUUID } from "node:crypto";
import type {
  ProofJobDto,
  ProofProgressDto,
  ProofResultDto,
  RulebookStatus,
  StoredProofDto,
  UserDto,
} from "@shared/contract/rest";
import { PROPERTY_IDS, type ProofResult } from "@shared/rulebook/prove";
import { ALARM_KIND } from "@shared/contract/alarmKinds";
import type { Rulebook } from "@shared/rulebook/schema";
import type { PointsWorking } from "@shared/layout/schema";
import type { AppDeps } from "../../deps";
import { HttpError, notFound } from "../../http/errors";
import { unfinishedReason } from "@shared/rulebook/proofAdvice";
import { raiseAlarm } from "../alarms/service";
import { findLayout, refuseIfArchived } from "../../data/layouts";
import { PROOF_MAX_MS, PROOF_MAX_STATES, PoolFull, ProofCancelled, ProofPool, type ProofRun } from "./pool";

/** Progress reaches sockets at most this often per job. */
export const PROGRESS_PUSH_INTERVAL_MS = 250;
/** An ended job can still be read (by a page that reconnects) for this long. */
export const ENDED_JOB_KEEP_MS = 15 * 60_000;

export interface ProofJobEvents {
  progress: [{ jobId: string; progress: ProofProgressDto }];
  done: [ProofJobDto];
}

interface Job {
  dto: ProofJobDto;
  run: ProofRun | null;
  startedMs: number;
  lastPushMs: number;
  rulebook: Rulebook;
  cancelledBy: string | null;
}

/**
 * The result of a proof, as the REST contract shows it. With the rulebook, an unfinished
 * proof's reason says which proving setting to reduce.
 */
export function toResultDto(result: ProofResult, rulebook?: Rulebook): ProofResultDto {
  return {
    verdict: result.verdict,
    properties: result.properties.map((p) => ({
      id: p.id,
      holds: p.holds,
      ...(p.counterexample ? { counterexample: p.counterexample } : {}),
      ...(p.detail ? { detail: p.detail } : {}),
    })),
    stats: { states: result.stats.states, ms: Math.round(result.stats.ms), transitions: result.stats.transitions },
    ...(result.verdict === "unfinished" && rulebook
      ? { reason: unfinishedReason(result.reason, rulebook.proving) }
      : result.reason
        ? { reason: result.reason }
        : {}),
  };
}

/** The verdict of a proof stopped before it ended: nothing decided. */
function cancelledResult(rulebook: Rulebook, progress: ProofProgressDto | null, ms: number, by: string | null): ProofResultDto {
  const routePoints = rulebook.proving?.routes.some((r) => Object.keys(r.points ?? {}).length > 0) ?? false;
  const properties = PROPERTY_IDS.filter((id) =>
    id === "priority-unhindered" ? rulebook.proving?.priority : id === "points-set-for-train" || id === "points-locked" ? routePoints : true,
  );
  return {
    verdict: "unfinished",
    properties: properties.map((id) => ({ id, holds: null })),
    stats: { states: progress?.states ?? 0, ms: Math.round(ms) },
    reason: by ? `cancelled by ${by}` : "cancelled",
  };
}

export class ProofJobs extends EventEmitter<ProofJobEvents> {
  private readonly jobs = new Map<string, Job>();
  private readonly timers = new Set<NodeJS.Timeout>();

  constructor(
    private readonly deps: AppDeps,
    readonly pool: ProofPool,
  ) {
    super();
  }

  /** Starts proving a stored version, or returns the job already proving it. */
  async start(slug: string, version: number, user: UserDto): Promise<string> {
    const layout = await findLayout(this.deps, slug);
    refuseIfArchived(layout);
    const row = await this.deps.db.models.RulebookVersion.findOne({ where: { layoutId: layout.id, version } });
    if (!row) throw notFound(`rulebook version ${version} of "${slug}"`);
    const already = [...this.jobs.values()].find((j) => j.dto.slug === slug && j.dto.version === version && !ended(j.dto));
    if (already) return already.dto.jobId;

    const jobId = randomUUID();
    const job: Job = {
      dto: {
        jobId,
        slug,
        version,
        state: "queued",
        progress: null,
        result: null,
        status: row.status,
        error: null,
        startedAt: new Date().toISOString(),
        finishedAt: null,
      },
      run: null,
      startedMs: Date.now(),
      lastPushMs: 0,
      rulebook: row.rulebook,
      cancelledBy: null,
    };
    const points = await pointsWorking(this.deps, layout.id);
    try {
      job.run = this.pool.run(row.rulebook, {
        points,
        onStart: () => {
          job.dto.state = "running";
          job.startedMs = Date.now();
        },
        onProgress: (progress) => this.onProgress(job, progress),
      });
    } catch (err) {
      if (err instanceof PoolFull) throw new HttpError(503, "busy", err.message);
      throw err;
    }
    this.jobs.set(jobId, job);
    job.run.result.then(
      (result) => this.finish(job, layout.id, user, toResultDto(result, row.rulebook)),
      (err: unknown) => this.fail(job, err),
    );
    return jobId;
  }

  find(jobId: string): ProofJobDto | undefined {
    return this.jobs.get(jobId)?.dto;
  }

  get(jobId: string): ProofJobDto {
    const job = this.find(jobId);
    if (!job) throw notFound(`proof job ${jobId}`);
    return job;
  }

  /** Jobs of a layout that have not ended. */
  active(slug: string): ProofJobDto[] {
    return [...this.jobs.values()].filter((j) => j.dto.slug === slug && !ended(j.dto)).map((j) => j.dto);
  }

  /** Stops a job; an ended job is returned as it is. The stored proof is left unchanged. */
  cancel(jobId: string, by: UserDto): ProofJobDto {
    const job = this.jobs.get(jobId);
    if (!job) throw notFound(`proof job ${jobId}`);
    if (!ended(job.dto)) {
      job.cancelledBy = by.name;
      job.run?.cancel();
      // The pool rejects the run with ProofCancelled; `fail` records it. Mark it now so the
      // reply to DELETE already shows the outcome.
      this.endCancelled(job);
    }
    return job.dto;
  }

  async close(): Promise<void> {
    for (const job of this.jobs.values()) if (!ended(job.dto)) job.run?.cancel();
    for (const timer of this.timers) clearTimeout(timer);
    this.timers.clear();
    await this.pool.close();
  }

  private onProgress(job: Job, progress: ProofProgressDto): void {
    job.dto.progress = progress;
    const now = Date.now();
    if (now - job.lastPushMs < PROGRESS_PUSH_INTERVAL_MS) return;
    job.lastPushMs = now;
    this.emit("progress", { jobId: job.dto.jobId, progress });
  }

  private async finish(job: Job, layoutId: number, user: UserDto, result: ProofResultDto): Promise<void> {
    if (ended(job.dto)) return;
    try {
      job.dto.status = await storeProof(this.deps, layoutId, job.dto.version, user, result);
      job.dto.result = result;
      job.dto.state = "done";
    } catch (err) {
      this.deps.logger.error({ err, jobId: job.dto.jobId }, "could not store a proof");
      job.dto.result = result;
      job.dto.state = "failed";
      job.dto.error = err instanceof HttpError && err.code === "archived" ? `the proof ended but was not stored: ${err.message}` : "the proof ended but could not be stored";
    }
    this.end(job);
  }

  private fail(job: Job, err: unknown): void {
    if (ended(job.dto)) return;
    if (err instanceof ProofCancelled) return this.endCancelled(job);
    this.deps.logger.error({ err, jobId: job.dto.jobId }, "a proof job failed");
    job.dto.state = "failed";
    job.dto.error = err instanceof Error ? err.message : String(err);
    this.end(job);
  }

  private endCancelled(job: Job): void {
    job.dto.state = "cancelled";
    job.dto.result = cancelledResult(job.rulebook, job.dto.progress, Date.now() - job.startedMs, job.cancelledBy);
    this.end(job);
  }

  private end(job: Job): void {
    job.dto.finishedAt = new Date().toISOString();
    job.run = null;
    this.emit("done", job.dto);
    const timer = setTimeout(() => {
      this.jobs.delete(job.dto.jobId);
      this.timers.delete(timer);
    }, ENDED_JOB_KEEP_MS);
    timer.unref();
    this.timers.add(timer);
  }
}

/**
 * How each points of the layout is worked, from its records: the prover moves power points
 * only after a throw and hand points whenever no train is on them (CONTRACT.md §5), so a
 * proof of a stored version must model the points the layout really has, not a guess from
 * the rulebook's throws.
 */
export async function pointsWorking(deps: AppDeps, layoutId: number): Promise<Record<string, PointsWorking>> {
  const rows = await deps.db.models.PointsRecord.findAll({ where: { layoutId }, attributes: ["pointsId", "worked"] });
  return Object.fromEntries(rows.map((r) => [r.pointsId, r.worked]));
}

function ended(job: ProofJobDto): boolean {
  return job.state === "done" || job.state === "cancelled" || job.state === "failed";
}

/**
 * Stores a proof on its version and moves the status: draft → proved when it is proved,
 * proved → draft when it is refuted; published stays published. A proof stopped by a limit
 * does not replace a proof that reached a verdict. Returns the status after.
 */
export async function storeProof(deps: AppDeps, layoutId: number, version: number, user: UserDto, result: ProofResultDto): Promise<RulebookStatus> {
  const { RulebookVersion, AuditEntry } = deps.db.models;
  const status = await deps.db.sequelize.transaction(async (transaction) => {
    // A layout archived while its proof ran stays as it was archived (read-only).
    const layout = await deps.db.models.Layout.findByPk(layoutId, { transaction, lock: transaction.LOCK.SHARE });
    if (layout) refuseIfArchived(layout);
    const row = await RulebookVersion.findOne({ where: { layoutId, version }, transaction, lock: transaction.LOCK.UPDATE });
    if (!row) throw notFound(`rulebook version ${version}`);
    const before = row.status;
    let status: RulebookStatus = before;
    if (before !== "published") {
      if (result.verdict === "proved") status = "proved";
      else if (result.verdict === "refuted") status = "draft";
    }
    const previous = row.proof as StoredProofDto | null;
    const keepPrevious = result.verdict === "unfinished" && previous !== null && previous.verdict !== "unfinished";
    const stored: StoredProofDto = {
      ...result,
      provedAt: new Date().toISOString(),
      by: user.name,
      limits: { maxStates: PROOF_MAX_STATES, maxMs: PROOF_MAX_MS },
    };
    await row.update({ status, ...(keepPrevious ? {} : { proof: stored }) }, { transaction });
    await AuditEntry.create(
      {
        layoutId,
        userId: user.id,
        action: "prove-rulebook",
        target: `version ${version}`,
        reason: null,
        before: { status: before },
        after: { status, verdict: result.verdict, states: result.stats.states },
      },
      { transaction },
    );
    return status;
  });
  if (status === "published" && result.verdict === "refuted") await announceRefutedPublished(deps, layoutId, version, result);
  return status;
}

/**
 * A published version was refuted: say so. The versions list shows the verdict beside the
 * "published" status; when it is the version running live, an alarm is raised as well, so the
 * signallers and maintainers on duty learn of it, not only the engineer who ran the proof.
 */
async function announceRefutedPublished(deps: AppDeps, layoutId: number, version: number, result: ProofResultDto): Promise<void> {
  const layout = await deps.db.models.Layout.findByPk(layoutId);
  if (!layout) return;
  const live = layout.liveVersion === version && !layout.archivedAt;
  const failed = result.properties.filter((p) => p.holds === false).map((p) => p.id);
  if (live) {
    await raiseAlarm(deps, {
      layoutId,
      kind: ALARM_KIND.rulebook,
      subject: `version ${version}`,
      message: `The live rulebook (version ${version}) was refuted: ${failed.join(", ")} can fail. Publish a proved version, or run only under the society's own rules until then.`,
    });
  }
  deps.bus.emit("rulebook.refuted", { layoutId, slug: layout.slug, version, live });
}

const registry = new WeakMap<AppDeps, ProofJobs>();

/** The proof jobs (and worker pool) of one app. */
export function proofJobs(deps: AppDeps): ProofJobs {
  let jobs = registry.get(deps);
  if (!jobs) {
    jobs = new ProofJobs(deps, new ProofPool());
    registry.set(deps, jobs);
  }
  return jobs;
}

/** Stops every proof of this app (shutdown, end of a test file). */
export async function closeProofJobs(deps: AppDeps): Promise<void> {
  const jobs = registry.get(deps);
  registry.delete(deps);
  await jobs?.close();
}
