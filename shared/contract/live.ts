/**
 * The live contract: MQTT topics and payloads between boards and the server (CONTRACT.md §2),
 * the live state the server pushes over socket.io, and the socket event maps. Both sides
 * `import type` from here; the server validates incoming MQTT payloads with these schemas.
 */
import { z } from "zod";
import type { EngineState } from "../rulebook/engine";
import { aspectSchema, idSchema, nameSchema, POINTS_LIES, POINTS_POSITIONS, type Aspect, type PointsLie, type PointsPosition, type ShownAspect } from "../rulebook/schema";
import type { Change } from "../rulebook/changes";
import type { AlarmKind } from "./alarmKinds";
import type { ProofJobDto, ProofProgressDto } from "./rest";

// ───────────────────────────── MQTT (CONTRACT.md §2) ─────────────────────────────

export const TOPIC_ROOT = "blocklight/v1";
/** Payloads larger than this are rejected unread. */
export const MAX_PAYLOAD_BYTES = 1024;

/**
 * Highest `seq` a board may send. A boot at 800 pulses/s takes over 80 days to reach it; a
 * bound keeps one absurd number (2^53) from blocking the rest of a boot.
 */
export const MAX_SEQ = 2 ** 31 - 1;
/** A message more than this far ahead of the next expected seq of its boot is refused, not waited for. */
export const MAX_SEQ_AHEAD = 100_000;

/**
 * Text a board sends that ends up in the event log: printable, no NUL or other control
 * characters (PostgreSQL text cannot hold NUL; control characters only hide things in the log).
 */
const LONE_SURROGATE = /[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/;
const boardText = (max: number) =>
  z
    .string()
    .min(1)
    .max(max)
    .regex(/^[^\u0000-\u001f\u007f]+$/, "must be printable text (no NUL or control characters)")
    .refine((text) => !LONE_SURROGATE.test(text), "must be well-formed Unicode (no lone surrogates)");

export const topics = {
  pulse: (layout: string, node: string) => `${TOPIC_ROOT}/${layout}/node/${node}/pulse`,
  points: (layout: string, node: string) => `${TOPIC_ROOT}/${layout}/node/${node}/points`,
  applied: (layout: string, node: string) => `${TOPIC_ROOT}/${layout}/node/${node}/applied`,
  serverStatus: (layout: string) => `${TOPIC_ROOT}/${layout}/server/status`,
  pointsSet: (layout: string, points: string) => `${TOPIC_ROOT}/${layout}/points/${points}/set`,
  /** Every board message of one layout (the server's subscription). */
  nodeFilter: (layout: string) => `${TOPIC_ROOT}/${layout}/node/#`,
  pointsFilter: (layout: string) => `${TOPIC_ROOT}/${layout}/points/#`,
  status: (layout: string, node: string) => `${TOPIC_ROOT}/${layout}/node/${node}/status`,
  shown: (layout: string, node: string) => `${TOPIC_ROOT}/${layout}/node/${node}/shown`,
  aspect: (layout: string, signal: string) => `${TOPIC_ROOT}/${layout}/signal/${signal}/aspect`,
  /** What a board may publish under. */
  nodePrefix: (layout: string, node: string) => `${TOPIC_ROOT}/${layout}/node/${node}/`,
  /** What a board may subscribe to. */
  signalFilter: (layout: string) => `${TOPIC_ROOT}/${layout}/signal/#`,
} as const;

export const bootSchema = boardText(64);
export const seqSchema = z.number().int().min(1).max(MAX_SEQ);
export const pulsePayloadSchema = z.strictObject({
  detector: idSchema,
  seq: seqSchema,
  boot: bootSchema,
  t: z.number().int().min(0).max(Number.MAX_SAFE_INTEGER).optional(),
});
/** Where a board may report points lie: the rulebook's own list. */
export const POINTS_LIE = POINTS_LIES;
export const pointsPayloadSchema = z.strictObject({
  points: idSchema,
  lies: z.enum(POINTS_LIE),
  seq: seqSchema,
  boot: bootSchema,
  t: z.number().int().min(0).max(Number.MAX_SAFE_INTEGER).optional(),
});
export const statusPayloadSchema = z.strictObject({
  online: z.boolean(),
  boot: bootSchema.optional(),
  fw: boardText(40).optional(),
});
/** Server → one board: every pulse and points report of `boot` up to `seq` is committed. */
export const appliedPayloadSchema = z.strictObject({ boot: bootSchema, seq: z.number().int().min(0).max(MAX_SEQ) });
/** Server → boards: the server of this layout is up (heartbeat every second) or gone (Last Will). */
export const serverStatusPayloadSchema = z.strictObject({ online: z.boolean(), at: z.string().optional() });
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

/** Server → boards: where the rulebook last threw power-worked points (CONTRACT.md §2). */
export const pointsSetPayloadSchema = z.strictObject({
  to: z.enum(POINTS_POSITIONS),
  rev: z.number().int().min(0),
  at: z.string(),
});

export interface MqttTopicPayloads {
  pulse: z.infer<typeof pulsePayloadSchema>;
  status: z.infer<typeof statusPayloadSchema>;
  shown: z.infer<typeof shownPayloadSchema>;
  aspect: z.infer<typeof aspectPayloadSchema>;
  points: z.infer<typeof pointsPayloadSchema>;
  pointsSet: z.infer<typeof pointsSetPayloadSchema>;
  applied: z.infer<typeof appliedPayloadSchema>;
  serverStatus: z.infer<typeof serverStatusPayloadSchema>;
}
export type PulsePayload = MqttTopicPayloads["pulse"];
export type StatusPayload = MqttTopicPayloads["status"];
export type ShownPayload = MqttTopicPayloads["shown"];
export type AspectPayload = MqttTopicPayloads["aspect"];
export type PointsPayload = MqttTopicPayloads["points"];
export type PointsSetPayload = MqttTopicPayloads["pointsSet"];
export type AppliedPayload = MqttTopicPayloads["applied"];
export type ServerStatusPayload = MqttTopicPayloads["serverStatus"];

// ───────────────────────────── live state (REST + socket) ─────────────────────────────

/**
 * `late`: a message for a seq its boot had already declared missed (stored, not applied).
 */
export const EVENT_STATUSES = ["accepted", "duplicate", "late", "rejected"] as const;
export type EventStatus = (typeof EVENT_STATUSES)[number];
/** `message`: a message on a topic that is none of the others (always rejected, kept for the log). */
export const EVENT_KINDS = ["pulse", "points", "tick", "status", "shown", "command", "message"] as const;
export type EventKind = (typeof EVENT_KINDS)[number];

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

/**
 * One change of a step as the client, the exports and the event log see it: the engine's own
 * change (discriminated by `kind`; shared/rulebook/changes.ts), which is plain JSON already.
 */
export type ChangeDto = Change;


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
  /** Increases by one with every step pushed for this layout (LiveUpdate.from … version); gaps mean "ask again". */
  version: number;
  rulebookVersion: number | null;
  session: SessionDto | null;
  shown: Record<string, ShownAspect>;
  latches: EngineState["latches"];
  counters: EngineState["counters"];
  selectors: EngineState["selectors"];
  held: EngineState["held"];
  /** Armed quiet triggers: rule id → deadline (ISO 8601). */
  quiet: Record<string, string>;
  faulted: null | { reason: string; at: string };
  alarms: AlarmDto[];
  nodes: Record<string, NodeLiveDto>;
  /**
   * What each board last reported it shows (lamp proving): signal → aspect (or `dark`), the
   * command rev it answers, when. A board in fail-safe reports danger here before the server knows why.
   */
  lamps?: Record<string, LampReportDto>;
  /** Where each points lie as last reported (absent: not reported yet), for the mimic. */
  points?: Record<string, PointsLie>;
  /** Where the rulebook last threw each power-worked points (absent: never thrown). */
  thrown?: Record<string, PointsPosition>;
  /** Set when this state was read from memory while the database was unreachable: it may lag behind. */
  stale?: boolean;
  /** When each latch/counter/selector/signal last changed: key `latch:NAME`, `counter:NAME`, `selector:NAME`, `signal:ID`. */
  since: Record<string, string>;
}

/** A board's last lamp report of one signal: what it shows and the command rev it answers, with when it came. */
export type LampReportDto = Pick<ShownPayload, "aspect" | "rev"> & { at: string };

/** One committed step: its place in the layout's count (`version`), the event and what it changed. */
export interface LiveStep {
  version: number;
  event: LiveEventDto | null;
  changes: ChangeDto[];
}

/** Fields of LiveState, each with its whole new value. */
export type LivePatch = Partial<Omit<LiveState, "slug" | "version">>;

/**
 * One push per commit batch and room (`live:update`), not one per pulse: the batch's steps in
 * order, numbered `from` … `version` (`from` is one more than the previous push's `version`),
 * and the fields of LiveState that changed over the batch, with their values after it.
 */
export interface LiveUpdate {
  slug: string;
  from: number;
  version: number;
  steps: LiveStep[];
  patch: LivePatch;
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

export type { AlarmKind, Aspect, ShownAspect };
