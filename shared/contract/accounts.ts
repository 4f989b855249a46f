/**
 * Accounts for a real society (CONTRACT.md §6): first-start setup, one's own account,
 * password reset by e-mail, and the admin's member changes. The server validates with
 * these schemas; the client's forms use the same ones.
 */
import { z } from "zod";
import { trimmedNameText } from "./nameText";
import { roleSchema } from "./rest";

/** Shown beside every new-password field before anyone gets it wrong. */
export const PASSWORD_RULE = "At least 10 characters; a few words you will remember are fine.";
export const PASSWORD_MIN_CHARS = 10;
export const passwordSchema = z.string().min(PASSWORD_MIN_CHARS, `use at least ${PASSWORD_MIN_CHARS} characters`).max(200, "use at most 200 characters");

const emailSchema = z.string().trim().toLowerCase().email("that does not look like an e-mail address").max(200);
const personNameSchema = trimmedNameText(120, "give a name");
const societyNameSchema = trimmedNameText(120, "give the society's name");

/** Reply to `GET /api/setup`. */
export interface SetupStatus {
  needed: boolean;
}

export const setupBodySchema = z.strictObject({
  token: z.string().min(1, "the setup link's token is missing").max(200),
  society: societyNameSchema,
  name: personNameSchema,
  email: emailSchema,
  password: passwordSchema,
});
export type SetupBody = z.infer<typeof setupBodySchema>;

/** `PATCH /api/society` (admin): renaming the society, e.g. after moving from the demo. */
export const societyBodySchema = z.strictObject({ name: societyNameSchema });
export type SocietyBody = z.infer<typeof societyBodySchema>;

/** Reply to `GET /api/society`: the name shown in the header, in mail and on the display. */
export interface SocietyResponse {
  name: string | null;
}

/** `PATCH /api/me`: a new name and/or password, always with the current password. */
export const updateMeBodySchema = z
  .strictObject({
    name: personNameSchema.optional(),
    password: passwordSchema.optional(),
    currentPassword: z.string().min(1, "give your current password").max(200),
  })
  .refine((b) => b.name !== undefined || b.password !== undefined, { message: "give a new name or a new password", path: ["name"] });
export type UpdateMeBody = z.infer<typeof updateMeBodySchema>;

/** `PATCH /api/me/preferences`: choices that need no password. */
export const preferencesBodySchema = z.strictObject({ alarmMail: z.boolean() });
export type PreferencesBody = z.infer<typeof preferencesBodySchema>;

export const resetRequestBodySchema = z.strictObject({ email: emailSchema });
export type ResetRequestBody = z.infer<typeof resetRequestBodySchema>;

export const resetPasswordBodySchema = z.strictObject({ password: passwordSchema });
export type ResetPasswordBody = z.infer<typeof resetPasswordBodySchema>;

/** `PATCH /api/admin/members/:id`. */
export const updateMemberBodySchema = z
  .strictObject({ role: roleSchema.optional(), alarmMail: z.boolean().optional() })
  .refine((b) => b.role !== undefined || b.alarmMail !== undefined, { message: "give a role or alarmMail", path: ["role"] });
export type UpdateMemberBody = z.infer<typeof updateMemberBodySchema>;

/** An account change as the members page lists it (audit entries without a layout). */
export interface AccountAuditEntry {
  id: number;
  at: string;
  user: string | null;
  action: string;
  target: string | null;
  before: unknown;
  after: unknown;
}
export interface AccountAuditResponse {
  entries: AccountAuditEntry[];
}
