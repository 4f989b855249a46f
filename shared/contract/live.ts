/**
 * The live contract: MQTT topics and payloads between boards and the server (CONTRACT.md §2),
 * the live state the server pushes over socket.io, and the socket event maps. Both sides
 * `import type` from here; the server validates incoming MQTT payloads with these schemas.
 */
import { z } from "zod";
import { aspectSchema, idSchema, nameSchema, type Aspect, type ShownAspect } from "../rulebook/schema";
import type { ProofJobDto, ProofProgressDto } from "./rest";

// ───────────────────────────── MQTT (CONTRACT.md §2) ─────────────────────────────

export const TOPIC_ROOT = "blocklight/v1";
/** Payloads larger than this are rejected unread. */
export const MAX_PAYLOAD_BYTES = 1024;

export const topics = {
  pulse: (layout: string, node: string) => `${TOPIC_ROOT}/${layout}/node/${node}/pulse`,
  status: (layout: string, node: string) => `${TOPIC_ROOT}/${layout}/node/${node}/status`,
  shown: (layout: string, node: string) => `${TOPIC_ROOT}/${layout}/node/${node}/shown`,
  aspect: (layout: string, signal: string) => `${TOPIC_ROOT}/${layout}/signal/${signal}/aspect`,
  /** What a board may publish under. */
  nodePrefix: (layout: string, node: string) => `${TOPIC_ROOT}/${layout}/node/${node}/`,
  /** What a board may subscribe to. */
  signalFilter: (layout: string) => `${TOPIC_ROOT}/${layout}/signal/#`,
} as const;

export const bootSchema = z.string().min(1).max(64);
export const pulsePayloadSchema = z.strictObject({
  detector: idSchema,
  seq: z.number().int().min(1),
  boot: bootSchema,
  t: z.number().int().min(0).optional(),
});
export const statusPayloadSchema = z.strictObject({
  online: z.boolean(),
  boot: bootSchema.optional(),
  fw: z.string().max(40).optional(),
});
export const shownPayloadSchema = z.strictObject({
  signal: idSchema,
  aspect: z.union([aspectSchema, z.literal("dark")]),
  rev: z.number().int().min(0),
});
export const aspectPayloadSchema = z.strictObject({
  aspect: aspectSchema,
  rev: z.number().int().min(0),
  at: z.string(),
});

export interface MqttTopicPayloads {
  pulse: z.infer<typeof pulsePayloadSchema>;
  status: z.infer<typeof statusPayloadSchema>;
  shown: z.infer<typeof shownPayloadSchema>;
  aspect: z.infer<typeof aspectPayloadSchema>;
}
export type PulsePayload = MqttTopicPayloads["pulse"];
export type StatusPayload = MqttTopicPayloads["status"];
export type ShownPayload = MqttTopicPayloads["shown"];
export type AspectPayload = MqttTopicPayloads["aspect"];

// ───────────────────────────── live state (REST + socket) ─────────────────────────────

export type EventStatus = "accepted" | "duplicate" | "rejected";
/** `message`: a message on a topic that is none of the others (always rejected, kept for the log). */
export type EventKind = "pulse" | "tick" | "status" | "shown" | "command" | "message";

/** One row of a session's event log, as the client and the exports see it. */
export interface LiveEventDto {
  id: string;
  kind: EventKind;
  status: EventStatus;
  reason: string | null;
  node: string | null;
  boot: string | null;
  seq: number | null;
  detector: string | null;
  receivedAt: string;
  boardT: number | null;
}

export interface ChangeDto {
  kind: string;
  name: string;
  from: unknown;
  to: unknown;
  rule?: string;
  command?: string;
  detail?: string;
}

export type AlarmKind =
  | "stuck"
  | "node-offline"
  | "detector-silent"
  | "chatter"
  | "axle-mismatch"
  | "missed-pulses"
  | "lamp-proving"
  | "rule-loop"
  | "count-underflow"
  | "rulebook";

export interface AlarmDto {
  id: number;
  kind: AlarmKind;
  subject: string | null;
  message: string;
  raisedAt: string;
  acknowledgedAt: string | null;
  acknowledgedBy: string | null;
  comment: string | null;
  clearedAt: string | null;
  /** How many times it happened while open (grouped by kind and subject). */
  occurrences: number;
  /** When it last happened. */
  lastSeenAt: string;
  /** The session it was raised in and the event that raised it (links to the log), when known. */
  sessionId?: number | null;
  eventId?: string | null;
}

export interface NodeLiveDto {
  online: boolean;
  since: string | null;
  boot: string | null;
  fw: string | null;
}

export interface SessionDto {
  id: number;
  openedAt: string;
  closedAt: string | null;
  rulebookVersion: number | null;
}

/** GET /api/layouts/:slug/live and the socket's full-state message (CONTRACT.md §6). */
export interface LiveState {
  slug: string;
  /** Increases by one with every update pushed for this layout; gaps mean "ask again". */
  version: number;
  rulebookVersion: number | null;
  session: SessionDto | null;
  shown: Record<string, ShownAspect>;
  latches: Record<string, boolean>;
  counters: Record<string, number>;
  selectors: Record<string, string>;
  held: string[];
  /** Armed quiet triggers: rule id → deadline (ISO 8601). */
  quiet: Record<string, string>;
  faulted: null | { reason: string; at: string };
  alarms: AlarmDto[];
  nodes: Record<string, NodeLiveDto>;
  /** When each latch/counter/selector/signal last changed: key `latch:NAME`, `counter:NAME`, `selector:NAME`, `signal:ID`. */
  since: Record<string, string>;
}

/** One pushed step: the event, what it changed, and the fields of LiveState that changed. */
export interface LiveUpdate {
  slug: string;
  version: number;
  event: LiveEventDto | null;
  changes: ChangeDto[];
  patch: Partial<Omit<LiveState, "slug" | "version">>;
}

// ───────────────────────────── signaller commands ─────────────────────────────

const reason = z.string().trim().min(3, "give a reason (at least 3 characters)").max(500);
export const commandBodySchema = z.discriminatedUnion("type", [
  z.strictObject({ type: z.literal("hold"), signal: idSchema, reason }),
  z.strictObject({ type: z.literal("release"), signal: idSchema, reason }),
  z.strictObject({ type: z.literal("set"), latch: nameSchema, reason }),
  z.strictObject({ type: z.literal("clear"), latch: nameSchema, reason }),
  z.strictObject({ type: z.literal("zero"), counter: nameSchema, reason }),
  z.strictObject({ type: z.literal("restart"), reason }),
]);
export type CommandBody = z.infer<typeof commandBodySchema>;

// ───────────────────────────── socket.io event maps ─────────────────────────────

/** One reply shape for every socket acknowledgement (STYLE.md habit 5). */
export type Ack<T> = { ok: true; data: T } | { ok: false; error: { code: string; message: string } };

export interface ServerToClientEvents {
  "live:state": (state: LiveState) => void;
  "live:update": (update: LiveUpdate) => void;
  "alarm:changed": (alarm: AlarmDto & { slug: string }) => void;
  /** A running proof job's search size, a few times a second, to the room `proof:<jobId>`. */
  "proof:progress": (update: { jobId: string; progress: ProofProgressDto }) => void;
  /** A proof job ended (done, cancelled or failed), to the room `proof:<jobId>`. */
  "proof:done": (job: ProofJobDto) => void;
}

export interface ClientToServerEvents {
  /** Join a layout's room; the ack carries the full state to start from. */
  "live:join": (request: { slug: string; displayToken?: string }, ack: (reply: Ack<LiveState>) => void) => void;
  "live:leave": (request: { slug: string }) => void;
  /** Follow a proof job (signed in only); the ack carries the job as it stands. */
  "proof:watch": (request: { jobId: string }, ack: (reply: Ack<ProofJobDto>) => void) => void;
  "proof:unwatch": (request: { jobId: string }) => void;
}

export type { Aspect, ShownAspect };
