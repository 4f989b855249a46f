/**
 * The REST map: every route the server answers under /api, named `"METHOD /api/pattern"`, with
 * the types of its reply and, where it takes them, its body and query. The client's `api()`
 * (src/api/client.ts) is typed by it, and tests/api/rest-map.test.ts checks that the server's
 * feature routers answer exactly these routes, so a route is added by one line here, one
 * `requirePermission(action)` in its handler (the action's roles: permissions.ts) and the handler.
 *
 * `download` is the query of a non-JSON reply (CSV, JSONL) the browser fetches itself through
 * a link: `apiUrl()` builds it, `api()` never asks for it.
 *
 * @example
 * // src/api/layouts.ts
 * api("GET /api/layouts/:slug", { slug: "kestrel-bank", signal }) // Promise<LayoutResponse>
 */
import type { LayoutFile } from "../layout/schema";
import type { EngineState, Change } from "../rulebook/engine";
import type { Aspect } from "../rulebook/schema";
import type {
  AccountAuditResponse,
  PreferencesBody,
  ResetPasswordBody,
  ResetRequestBody,
  SetupBody,
  SetupStatus,
  SocietyBody,
  SocietyResponse,
  UpdateMeBody,
  UpdateMemberBody,
} from "./accounts";
import type { AlarmSettingsPatch, AlarmSettingsResponse } from "./alarmSettings";
import type {
  AcceptInvitationBody,
  AcknowledgeBody,
  AlarmsResponse,
  AlarmStateFilter,
  AuditResponse,
  CreateDisplayLinkResponse,
  DisplayLinkDto,
  DisplayResponse,
  InvitationBody,
  InvitationPreview,
  MemberDto,
  MembersResponse,
  OutboxResponse,
} from "./controlRoom";
import type { ArchiveResponse, CreateLayoutBody, GenerateTemplateBody, GeneratedRulebookResponse, PublishBody, TemplatesResponse } from "./layoutEdit";
import type { AlarmDto, CommandBody, LiveState } from "./live";
import type { SessionReportDto } from "./report";
import type {
  CreateNodeBody,
  CreateNodeResponse,
  HealthResponse,
  ImportLayoutResponse,
  LayoutResponse,
  LayoutsResponse,
  LoginBody,
  MeResponse,
  ProofJobResponse,
  ProofJobsResponse,
  ProofResultDto,
  PublishResponse,
  RulebookVersionResponse,
  SaveDraftBody,
  SaveDraftResponse,
  StartProofResponse,
} from "./rest";
import type { SessionEventFilter, SessionEventPage, SessionImportResponse, SessionInputsResponse, SessionListResponse } from "./sessions";

// ───────────── shapes no other contract module names (small replies and bodies) ─────────────

/** `{ok:true}`: logout, setup, password reset. */
export interface OkResponse {
  ok: true;
}
export interface SessionControlBody {
  action: "open" | "close";
  note?: string;
}
export interface CreateDisplayLinkBody {
  label?: string;
}
export interface DisplayLinksResponse {
  links: DisplayLinkDto[];
}
export interface AcknowledgeResponse {
  alarm: AlarmDto;
}
export interface MemberResponse {
  member: MemberDto;
}
/** A new or re-sent invitation. */
export interface InvitationIdResponse {
  id: number;
}
export interface AcceptInvitationResponse {
  email: string;
}
/** Times are ISO 8601 strings (the contract's form) or milliseconds. */
type SimulateTime = { at: string | number; reason?: string };
export type SimulateInput =
  | { type: "pulse"; detector: string; at: string | number }
  | { type: "tick"; at: string | number }
  | ({ type: "hold" | "release"; signal: string } & SimulateTime)
  | ({ type: "set" | "clear"; latch: string } & SimulateTime)
  | ({ type: "zero"; counter: string } & SimulateTime)
  | ({ type: "restart" } & SimulateTime);
export interface SimulateBody {
  /** A layout file; the server validates it. */
  layout: unknown;
  events: SimulateInput[];
}
export interface SimulateResponse {
  initial: { shown: Record<string, Aspect> };
  /** One per input; the input's time comes back in milliseconds. */
  steps: { input: SimulateInput; shown: Record<string, Aspect>; state: EngineState; changes: Change[] }[];
}
/** `format=json`: one page of the event log table. */
export type SessionEventPageQuery = SessionEventFilter & { format: "json"; after?: string; limit?: number; tail?: number };
export type ReportCsvTable = "routes" | "trains" | "checks" | "detectors" | "nodes" | "alarms";

// ───────────────────────────── the map ─────────────────────────────

interface RouteShape {
  reply: unknown;
  body?: unknown;
  query?: object;
  download?: object;
}
/** A route's types; the value is empty at run time (only its key is read: the map test). */
interface Route<S extends RouteShape> {
  readonly shape?: S;
}
const route = <S extends RouteShape>(): Route<S> => ({});

export const REST_ROUTES = {
  "GET /api/health": route<{ reply: HealthResponse }>(),
  // auth and one's own account
  "POST /api/auth/login": route<{ body: LoginBody; reply: MeResponse }>(),
  "POST /api/auth/logout": route<{ reply: OkResponse }>(),
  "POST /api/auth/reset": route<{ body: ResetRequestBody; reply: OkResponse }>(),
  "POST /api/auth/reset/:token": route<{ body: ResetPasswordBody; reply: OkResponse }>(),
  "GET /api/me": route<{ reply: MeResponse }>(),
  "PATCH /api/me": route<{ body: UpdateMeBody; reply: MeResponse }>(),
  "PATCH /api/me/preferences": route<{ body: PreferencesBody; reply: MeResponse }>(),
  // layouts and the workbench
  "GET /api/layouts": route<{ reply: LayoutsResponse }>(),
  "POST /api/layouts/import": route<{ body: unknown; reply: ImportLayoutResponse }>(),
  "POST /api/layouts": route<{ body: CreateLayoutBody; reply: LayoutResponse }>(),
  "GET /api/layouts/:slug": route<{ reply: LayoutResponse }>(),
  /** The body is meant to be a SaveLayoutBodyInput; an editor sends its draft as drawn and the 400 lists what is wrong. */
  "PUT /api/layouts/:slug": route<{ body: unknown; reply: LayoutResponse }>(),
  "POST /api/layouts/:slug/archive": route<{ reply: ArchiveResponse }>(),
  "POST /api/layouts/:slug/restore": route<{ reply: ArchiveResponse }>(),
  "GET /api/layouts/:slug/export": route<{ reply: LayoutFile }>(),
  "POST /api/layouts/:slug/nodes": route<{ body: CreateNodeBody; reply: CreateNodeResponse }>(),
  "GET /api/templates": route<{ reply: TemplatesResponse }>(),
  "POST /api/templates/:id": route<{ body: GenerateTemplateBody; reply: GeneratedRulebookResponse }>(),
  // rulebooks, simulation, proofs
  "GET /api/layouts/:slug/rulebooks/:version": route<{ reply: RulebookVersionResponse }>(),
  "POST /api/layouts/:slug/rulebooks": route<{ body: SaveDraftBody; reply: SaveDraftResponse }>(),
  "POST /api/layouts/:slug/rulebooks/:version/publish": route<{ body: PublishBody; reply: PublishResponse }>(),
  "POST /api/simulate": route<{ body: SimulateBody; reply: SimulateResponse }>(),
  "POST /api/prove": route<{ body: unknown; reply: ProofResultDto }>(),
  "POST /api/layouts/:slug/rulebooks/:version/proofs": route<{ reply: StartProofResponse }>(),
  "GET /api/layouts/:slug/proofs": route<{ reply: ProofJobsResponse }>(),
  "GET /api/proofs/:jobId": route<{ reply: ProofJobResponse }>(),
  "DELETE /api/proofs/:jobId": route<{ reply: ProofJobResponse }>(),
  // live control room
  "GET /api/layouts/:slug/live": route<{ query: { display?: string }; reply: LiveState }>(),
  "POST /api/layouts/:slug/commands": route<{ body: CommandBody; reply: LiveState }>(),
  "POST /api/layouts/:slug/sessions": route<{ body: SessionControlBody; reply: LiveState }>(),
  "POST /api/layouts/:slug/display-links": route<{ body: CreateDisplayLinkBody; reply: CreateDisplayLinkResponse }>(),
  "GET /api/layouts/:slug/display-links": route<{ reply: DisplayLinksResponse }>(),
  "DELETE /api/layouts/:slug/display-links/:token": route<{ reply: void }>(),
  "GET /api/display/:token": route<{ reply: DisplayResponse }>(),
  "GET /api/layouts/:slug/alarms": route<{ query: { state?: AlarmStateFilter }; reply: AlarmsResponse }>(),
  "POST /api/alarms/:id/acknowledge": route<{ body: AcknowledgeBody; reply: AcknowledgeResponse }>(),
  "GET /api/layouts/:slug/alarm-settings": route<{ reply: AlarmSettingsResponse }>(),
  "PUT /api/layouts/:slug/alarm-settings": route<{ body: AlarmSettingsPatch; reply: AlarmSettingsResponse }>(),
  "GET /api/layouts/:slug/audit": route<{ reply: AuditResponse }>(),
  // running days
  "GET /api/layouts/:slug/sessions": route<{ reply: SessionListResponse }>(),
  /** Multipart: `file` (JSONL or CSV), optional `rulebookVersion`. */
  "POST /api/layouts/:slug/sessions/import": route<{ body: FormData; reply: SessionImportResponse }>(),
  "GET /api/sessions/:id/events": route<{ query: SessionEventPageQuery; reply: SessionEventPage; download: { format: "jsonl" | "csv" } }>(),
  "GET /api/sessions/:id/inputs": route<{ reply: SessionInputsResponse }>(),
  "GET /api/sessions/:id/report": route<{ query?: { format?: "json" }; reply: SessionReportDto; download: { format: "csv"; table: ReportCsvTable } }>(),
  // the society: setup, members, invitations, mail
  "GET /api/setup": route<{ reply: SetupStatus }>(),
  "POST /api/setup": route<{ body: SetupBody; reply: OkResponse }>(),
  "GET /api/society": route<{ reply: SocietyResponse }>(),
  "PATCH /api/society": route<{ body: SocietyBody; reply: SocietyResponse }>(),
  "GET /api/admin/members": route<{ reply: MembersResponse }>(),
  "PATCH /api/admin/members/:id": route<{ body: UpdateMemberBody; reply: MemberResponse }>(),
  "DELETE /api/admin/members/:id": route<{ reply: void }>(),
  "POST /api/invitations": route<{ body: InvitationBody; reply: InvitationIdResponse }>(),
  "POST /api/admin/invitations/:id/resend": route<{ reply: InvitationIdResponse }>(),
  "DELETE /api/admin/invitations/:id": route<{ reply: void }>(),
  "GET /api/invitations/:token": route<{ reply: InvitationPreview }>(),
  "POST /api/invitations/:token/accept": route<{ body: AcceptInvitationBody; reply: AcceptInvitationResponse }>(),
  "GET /api/admin/audit": route<{ reply: AccountAuditResponse }>(),
  "GET /api/admin/outbox": route<{ reply: OutboxResponse }>(),
} as const;

export type RestRoute = keyof typeof REST_ROUTES;
export type RestMethod = "GET" | "POST" | "PUT" | "PATCH" | "DELETE";
type ShapeOf<K extends RestRoute> = NonNullable<(typeof REST_ROUTES)[K]["shape"]>;

/** `"/api/layouts/:slug"` of `"GET /api/layouts/:slug"`. */
export type PatternOf<K extends RestRoute> = K extends `${RestMethod} ${infer P}` ? P : never;
export type ReplyOf<K extends RestRoute> = ShapeOf<K>["reply"];
/** `never` when the route takes no body. */
export type BodyOf<K extends RestRoute> = ShapeOf<K> extends { body: infer B } ? B : never;
/** `never` when the route takes no query. */
export type QueryOf<K extends RestRoute> = "query" extends keyof ShapeOf<K> ? Exclude<ShapeOf<K>["query"], undefined> : never;
/** Whether the query may be left out (every key of it optional, or none at all). */
export type QueryOptional<K extends RestRoute> = object extends Pick<ShapeOf<K>, "query" & keyof ShapeOf<K>> ? true : false;
export type DownloadOf<K extends RestRoute> = "download" extends keyof ShapeOf<K> ? ShapeOf<K>["download"] : never;

/** Method and pattern of a route's name: `"GET /api/me"` → `{ method: "GET", pattern: "/api/me" }`. */
export function splitRoute<K extends RestRoute>(route: K): { method: RestMethod; pattern: PatternOf<K> } {
  const space = route.indexOf(" ");
  return { method: route.slice(0, space) as RestMethod, pattern: route.slice(space + 1) as PatternOf<K> };
}
