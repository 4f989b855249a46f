/**
 * REST request and response shapes shared by the Express server and the React client
 * (CONTRACT.md §6 plus the product's own read endpoints). The server validates bodies
 * with the zod schemas here; the client imports the types.
 */
import { z } from "zod";
import type { LayoutNode, LayoutRecords, LayoutScale } from "../layout/schema";
import type { Move, ProofResult, PropertyResult, ProveOptions } from "../rulebook/prove";
import type { Rulebook } from "../rulebook/schema";
import { idSchema } from "../rulebook/schema";

export const ROLES = ["admin", "engineer", "signaller", "maintainer", "viewer"] as const;
export const roleSchema = z.enum(ROLES);
export type Role = z.infer<typeof roleSchema>;

/** Every REST error: CONTRACT.md §6. */
export interface ApiErrorBody {
  error: { code: string; message: string; details?: unknown };
}

export const loginBodySchema = z.strictObject({
  email: z.string().trim().toLowerCase().email().max(200),
  password: z.string().min(1).max(200),
});
export type LoginBody = z.infer<typeof loginBodySchema>;

export interface UserDto {
  id: number;
  email: string;
  name: string;
  role: Role;
  /** Whether alarms are mailed to this member. */
  alarmMail: boolean;
}
export interface MeResponse {
  user: UserDto;
}

export interface HealthResponse {
  ok: boolean;
  db: "up" | "down";
  broker: "up" | "down";
  /**
   * Each running layout: `live`, `fail-safe` (every signal at danger: the database cannot
   * commit, or the rulebook faulted) or `stalled` (its link or its commits are stuck).
   */
  layouts?: Record<string, LayoutHealth>;
}
export type LayoutHealth = "live" | "fail-safe" | "stalled";

export const RULEBOOK_STATUSES = ["draft", "proved", "published"] as const;
export type RulebookStatus = (typeof RULEBOOK_STATUSES)[number];

export interface RulebookVersionSummary {
  version: number;
  status: RulebookStatus;
  /** True for the one version that runs live. */
  live: boolean;
  author: string | null;
  note: string | null;
  createdAt: string;
  /** The verdict of the version's last proof; null when it was never proved. */
  verdict: ProofResultDto["verdict"] | null;
  provedAt: string | null;
}
export interface RulebookVersionDetail extends RulebookVersionSummary {
  rulebook: Rulebook;
  proof: unknown | null;
}

export interface LayoutSummary {
  slug: string;
  name: string;
  scale: LayoutScale;
  liveVersion: number | null;
  /** An archived layout does not run live and is read-only. */
  archived: boolean;
  detectorCount: number;
  signalCount: number;
  nodeCount: number;
}
export interface LayoutsResponse {
  layouts: LayoutSummary[];
}

/** A board as the layout file has it, every list present (no secret: that never leaves). */
export type NodeDto = Required<LayoutNode>;

export interface LayoutDetail extends Pick<LayoutRecords, "lines" | "detectors" | "signals" | "points"> {
  slug: string;
  name: string;
  scale: LayoutScale;
  nodes: NodeDto[];
  schematic: Record<string, unknown> | null;
  versions: RulebookVersionSummary[];
  /** Send this back with `PUT /api/layouts/:slug`; it grows by one with every save. */
  revision: number;
  liveVersion: number | null;
  archivedAt: string | null;
}
export interface LayoutResponse {
  layout: LayoutDetail;
}

export const createNodeBodySchema = z.strictObject({
  id: idSchema,
  name: z.string().min(1).max(120),
  detectors: z.array(idSchema).default([]),
  signals: z.array(idSchema).default([]),
  points: z.array(idSchema).default([]),
});
/** What a client sends (lists may be left out); the server works on the parsed form. */
export type CreateNodeBody = z.input<typeof createNodeBodySchema>;
export interface CreateNodeResponse {
  id: string;
  /** Shown only in this response; stored hashed. */
  secret: string;
}

export const saveDraftBodySchema = z.strictObject({
  rulebook: z.unknown(),
  note: z.string().max(500).optional(),
});
/** What a client sends to save a draft; the rulebook is checked by the server, so any JSON goes. */
export type SaveDraftBody = Omit<z.input<typeof saveDraftBodySchema>, "rulebook"> & { rulebook: unknown };
export interface SaveDraftResponse {
  version: number;
}

/** Reply to `POST /api/layouts/import` (201). */
export interface ImportLayoutResponse {
  slug: string;
}

/** Reply to `GET /api/layouts/:slug/rulebooks/:version`. */
export interface RulebookVersionResponse {
  version: RulebookVersionDetail;
}

/** Reply to `POST /api/layouts/:slug/rulebooks/:version/publish`: the version now live. */
export interface PublishResponse {
  version: number;
}

// ───────────────────────────── proofs (CONTRACT.md §5, §6) ─────────────────────────────

// The prover's own types (shared/rulebook/prove.ts), not copies: a change there is a change here.

/** One move of a counterexample (CONTRACT.md §5); trains are numbered from 1 in order of arrival. */
export type ProofMoveDto = Move;

/** One property: true proved, false refuted (see `counterexample`), null not decided before a limit. */
export type ProofPropertyDto = PropertyResult;

/**
 * Reply to `POST /api/prove`, and a finished proof job's result. "unfinished" (with a
 * `reason`) when the state or time limit was reached or the proof was cancelled. The search's
 * own figures (bytes, which limit stopped it) stay on the server; a cancelled job has no
 * transition count.
 */
export type ProofResultDto = Pick<ProofResult, "verdict" | "reason"> & {
  properties: ProofPropertyDto[];
  stats: Pick<ProofResult["stats"], "states" | "ms"> & Partial<Pick<ProofResult["stats"], "transitions">>;
};

/** What `rulebook_versions.proof` holds: the result, when and by whom, and the limits used. */
export interface StoredProofDto extends ProofResultDto {
  provedAt: string;
  by: string | null;
  limits: { maxStates: number; maxMs: number };
}

/** A running search's size, as the prover reports it to `onProgress`. */
export type ProofProgressDto = Parameters<NonNullable<ProveOptions["onProgress"]>>[0];

export type ProofJobState = "queued" | "running" | "done" | "cancelled" | "failed";

/** A proof job of a stored rulebook version, as `GET /api/proofs/:jobId` and the socket show it. */
export interface ProofJobDto {
  jobId: string;
  slug: string;
  version: number;
  state: ProofJobState;
  progress: ProofProgressDto | null;
  /** Set when the job has ended (for "cancelled", an "unfinished" verdict). */
  result: ProofResultDto | null;
  /** The version's status after the job (draft → proved when every property holds). */
  status: RulebookStatus | null;
  error: string | null;
  startedAt: string;
  finishedAt: string | null;
}

/** Reply to `POST /api/layouts/:slug/rulebooks/:version/proofs` (202). */
export interface StartProofResponse {
  jobId: string;
}

/** Reply to `GET /api/proofs/:jobId` and `DELETE /api/proofs/:jobId`. */
export interface ProofJobResponse {
  job: ProofJobDto;
}

/** Reply to `GET /api/layouts/:slug/proofs`: the jobs of a layout that are still running. */
export interface ProofJobsResponse {
  jobs: ProofJobDto[];
}
