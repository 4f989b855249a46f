/**
 * MQTT message → a validated pulse, points report, status or lamp-proving report, or a
 * rejection with a reason (CONTRACT.md §2). Pure apart from the node directory it is handed.
 * Everything that passes is safe to store: valid UTF-8, no NUL or control characters in
 * text, numbers within bounds (the schemas in shared/contract/live.ts say which).
 */
import { z } from "zod";
import {
  MAX_PAYLOAD_BYTES,
  TOPIC_ROOT,
  pointsPayloadSchema,
  pulsePayloadSchema,
  shownPayloadSchema,
  statusPayloadSchema,
  type EventKind,
  type PointsPayload,
  type PulsePayload,
  type ShownPayload,
  type StatusPayload,
} from "@shared/contract/live";
import { ID_PATTERN } from "@shared/rulebook/schema";

/** What the pipeline knows about one board of a layout. */
export interface NodeEntry {
  detectors: ReadonlySet<string>;
  signals: ReadonlySet<string>;
  /** Absent while the layout records no points for this node: reports for any points are taken. */
  points?: ReadonlySet<string>;
}

export type IngestAccepted =
  | { ok: true; slug: string; node: string; kind: "pulse"; payload: PulsePayload }
  | { ok: true; slug: string; node: string; kind: "points"; payload: PointsPayload }
  | { ok: true; slug: string; node: string; kind: "status"; payload: StatusPayload }
  | { ok: true; slug: string; node: string; kind: "shown"; payload: ShownPayload };

export interface IngestRejected {
  ok: false;
  /** null when the topic does not even name a layout: such messages can only be logged. */
  slug: string | null;
  node: string | null;
  kind: EventKind;
  reason: string;
  /**
   * Refused only by the directory of boards (an unknown node; a detector, points or signal the
   * node does not serve): records being saved may make it right (recordsHold.ts).
   */
  directory?: true;
  /** For the log: the detector / boot / seq read from a payload that was otherwise refused. */
  detector?: string;
  boot?: string;
  seq?: number;
}

export type IngestResult = IngestAccepted | IngestRejected;

const SUFFIXES = { pulse: pulsePayloadSchema, points: pointsPayloadSchema, status: statusPayloadSchema, shown: shownPayloadSchema } as const;
const utf8 = new TextDecoder("utf-8", { fatal: true });
type Suffix = keyof typeof SUFFIXES;

/** Splits `blocklight/v1/{layout}/node/{node}/{kind}`; null when the topic has another shape. */
export function parseNodeTopic(topic: string): { slug: string; node: string; suffix: string } | null {
  const levels = topic.split("/");
  const root = TOPIC_ROOT.split("/");
  if (levels.length !== root.length + 4) return null;
  if (levels[0] !== root[0] || levels[1] !== root[1] || levels[3] !== "node") return null;
  const slug = levels[2];
  const node = levels[4];
  if (!slug || !ID_PATTERN.test(node)) return null;
  return { slug, node, suffix: levels[5] };
}

function describeIssues(error: z.ZodError): string {
  return error.issues
    .slice(0, 3)
    .map((issue) => `${issue.path.length ? issue.path.join(".") : "payload"}: ${issue.message}`)
    .join("; ");
}

/**
 * Validates one message. `nodesOf(slug)` gives the boards of a layout that runs live, or
 * undefined for a layout we do not know.
 */
export function ingestMessage(
  topic: string,
  payload: Uint8Array,
  nodesOf: (slug: string) => ReadonlyMap<string, NodeEntry> | undefined,
): IngestResult {
  const parsed = parseNodeTopic(topic);
  if (!parsed) {
    const levels = topic.split("/");
    const slug = levels[0] === "blocklight" && levels[1] === "v1" && levels[2] ? levels[2] : null;
    const node = levels[3] === "node" && levels[4] ? levels[4] : null;
    return { ok: false, slug, node, kind: "message", reason: `wrong topic shape: expected ${TOPIC_ROOT}/{layout}/node/{node}/pulse|points|status|shown` };
  }
  const { slug, node, suffix } = parsed;
  if (!(suffix in SUFFIXES)) {
    return { ok: false, slug, node, kind: "message", reason: `wrong topic shape: unknown message kind "${suffix.slice(0, 40)}" (pulse, points, status or shown)` };
  }
  const kind = suffix as Suffix;
  const reject = (reason: string, extra: Partial<IngestRejected> = {}): IngestRejected => ({ ok: false, slug, node, kind, reason, ...extra });

  if (payload.byteLength > MAX_PAYLOAD_BYTES) return reject(`payload over ${MAX_PAYLOAD_BYTES} bytes (${payload.byteLength})`);
  let json: unknown;
  try {
    json = JSON.parse(utf8.decode(payload));
  } catch (err) {
    if (err instanceof TypeError) return reject("payload is not valid UTF-8");
    return reject(`malformed JSON: ${(err as Error).message.slice(0, 200)}`);
  }
  const nodes = nodesOf(slug);
  if (!nodes) return reject(`unknown layout "${slug}" (or it has no live rulebook)`);
  const entry = nodes.get(node);
  const unknownNode = `unknown node "${node}" on layout "${slug}"`;

  switch (kind) {
    case "pulse": {
      const result = pulsePayloadSchema.safeParse(json);
      if (!result.success) return reject(`invalid pulse: ${describeIssues(result.error)}`);
      const p = result.data;
      const seen = { detector: p.detector, boot: p.boot, seq: p.seq };
      if (!entry) return reject(unknownNode, { ...seen, directory: true });
      if (!entry.detectors.has(p.detector)) return reject(`detector "${p.detector}" is not served by node "${node}"`, { ...seen, directory: true });
      return { ok: true, slug, node, kind, payload: p };
    }
    case "points": {
      const result = pointsPayloadSchema.safeParse(json);
      if (!result.success) return reject(`invalid points report: ${describeIssues(result.error)}`);
      const p = result.data;
      const seen = { boot: p.boot, seq: p.seq };
      if (!entry) return reject(unknownNode, { ...seen, directory: true });
      if (entry.points && !entry.points.has(p.points)) return reject(`points "${p.points}" are not reported by node "${node}"`, { ...seen, directory: true });
      return { ok: true, slug, node, kind, payload: p };
    }
    case "status": {
      const result = statusPayloadSchema.safeParse(json);
      if (!result.success) return reject(`invalid status: ${describeIssues(result.error)}`);
      if (!entry) return reject(unknownNode, { directory: true });
      return { ok: true, slug, node, kind, payload: result.data };
    }
    case "shown": {
      const result = shownPayloadSchema.safeParse(json);
      if (!result.success) return reject(`invalid lamp-proving report: ${describeIssues(result.error)}`);
      if (!entry) return reject(unknownNode, { directory: true });
      if (!entry.signals.has(result.data.signal)) return reject(`signal "${result.data.signal}" is not served by node "${node}"`, { directory: true });
      return { ok: true, slug, node, kind, payload: result.data };
    }
  }
}
