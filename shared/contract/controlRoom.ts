/**
 * REST shapes of the control room that are not in live.ts: audit entries, display links
 * and what a display link opens, the mail outbox, members and invitations.
 */
import { z } from "zod";
import type { ProvingRoute } from "../rulebook/schema";
import type { AlarmDto, AlarmKind } from "./live";
import { passwordSchema } from "./accounts";
import { trimmedNameText } from "./nameText";
import { roleSchema, type LayoutDetail, type Role, type UserDto } from "./rest";

export interface AuditEntryDto {
  id: number;
  at: string;
  user: string | null;
  action: string;
  target: string | null;
  reason: string | null;
  before: unknown;
  after: unknown;
}
export interface AuditResponse {
  entries: AuditEntryDto[];
}

export interface AlarmsResponse {
  alarms: AlarmDto[];
}
export const acknowledgeBodySchema = z.strictObject({ comment: z.string().trim().max(500).default("") });
export type AcknowledgeBody = z.input<typeof acknowledgeBodySchema>;
export type AlarmStateFilter = "open" | "all";
export type { AlarmKind };

export interface DisplayLinkDto {
  /** Present only in the reply that created it: the token is stored hashed. */
  token?: string;
  id: number;
  label: string | null;
  url?: string;
  createdAt: string;
  revokedAt: string | null;
}
export interface CreateDisplayLinkResponse {
  token: string;
  url: string;
}

/** What a visitor display needs to draw the mimic: no people, no node secrets. */
export type DisplayLayoutDto = Pick<LayoutDetail, "slug" | "name" | "lines" | "detectors" | "signals" | "points" | "schematic"> & {
  routes: ProvingRoute[];
};
export interface DisplayResponse {
  layout: DisplayLayoutDto;
}

export interface OutboxMessageDto {
  id: number;
  to: string;
  subject: string;
  body: string;
  createdAt: string;
  sentAt: string | null;
  error: string | null;
}
export interface OutboxResponse {
  messages: OutboxMessageDto[];
}

/** A member as the members page lists them: the same account view as `GET /api/me`. */
export type MemberDto = UserDto;
export interface InvitationDto {
  id: number;
  email: string;
  role: Role;
  createdAt: string;
  expiresAt: string;
  acceptedAt: string | null;
  revokedAt: string | null;
}
export interface MembersResponse {
  members: MemberDto[];
  invitations: InvitationDto[];
}

export const invitationBodySchema = z.strictObject({
  email: z.string().trim().toLowerCase().email().max(200),
  role: roleSchema,
});
export type InvitationBody = z.infer<typeof invitationBodySchema>;

export const acceptInvitationBodySchema = z.strictObject({
  name: trimmedNameText(120, "give your name"),
  password: passwordSchema,
});
export type AcceptInvitationBody = z.infer<typeof acceptInvitationBodySchema>;

export interface InvitationPreview {
  email: string;
  role: Role;
  expiresAt: string;
}
