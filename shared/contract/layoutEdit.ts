/**
 * REST shapes of the engineer's workbench (CONTRACT.md §6): creating a layout, editing its
 * records with a `revision`, archiving, templates, and publishing with or without a proof.
 * The server parses bodies with these schemas; the client's forms use the same ones.
 *
 * | route | body | reply |
 * | --- | --- | --- |
 * | `POST /api/layouts` | {@link CreateLayoutBody} | 201 {@link LayoutResponse} (empty, revision 1) |
 * | `GET /api/layouts/:slug` | — | {@link LayoutResponse} (records, schematic, `revision`) |
 * | `PUT /api/layouts/:slug` | {@link SaveLayoutBody} | {@link LayoutResponse}; 409 `stale_revision` / `archived`; 400 `invalid_layout` / `breaks_live_rulebook` |
 * | `POST /api/layouts/:slug/archive` / `…/restore` | — | {@link ArchiveResponse} |
 * | `GET /api/templates` | — | {@link TemplatesResponse} |
 * | `POST /api/templates/:id` | {@link GenerateTemplateBody} | {@link GeneratedRulebookResponse}; 400 `invalid_options` |
 * | `POST /api/layouts/:slug/rulebooks/:version/publish` | {@link PublishBody} | `{version}`; 400 `unproved` |
 */
import { z } from "zod";
import { layoutRecordsSchema, scaleSchema, slugSchema } from "../layout/schema";
import type { Rulebook } from "../rulebook/schema";
import { trimmedNameText } from "./nameText";
import type { ProofResultDto } from "./rest";

export type { LayoutResponse, LayoutDetail } from "./rest";

const nameText = trimmedNameText(120, "must not be empty");

/** `POST /api/layouts`: a new, empty layout (no records, no rulebook). */
export const createLayoutBodySchema = z.strictObject({
  slug: slugSchema,
  name: nameText,
  scale: scaleSchema,
});
export type CreateLayoutBody = z.infer<typeof createLayoutBodySchema>;

/**
 * Fields of `GET /api/layouts/:slug` that a save cannot change (publishing, archive and
 * restore do): `PUT` accepts them back, so a script can GET, change and PUT, and ignores
 * them. `versions` is not looked into; the JSON body limit bounds it.
 */
export const layoutReadOnlyEchoSchema = z.object({
  versions: z.array(z.unknown()).optional(),
  liveVersion: z.number().int().positive().nullable().optional(),
  archivedAt: z.string().max(40).nullable().optional(),
});
export const LAYOUT_READ_ONLY_FIELDS = Object.keys(layoutReadOnlyEchoSchema.shape) as (keyof typeof layoutReadOnlyEchoSchema.shape)[];

/**
 * `PUT /api/layouts/:slug`: a layout file without `rulebook`, plus the `revision` the editor
 * started from. The slug cannot change (it names the MQTT topics of the boards). What `GET`
 * returns is accepted as it is: `format` may be left out (it is the current one),
 * `schematic: null` means no drawing, and the read-only fields above are ignored.
 */
export const saveLayoutBodySchema = layoutRecordsSchema.extend({
  format: layoutRecordsSchema.shape.format.optional(),
  schematic: layoutRecordsSchema.shape.schematic.unwrap().nullable().optional(),
  revision: z.number().int().positive(),
  ...layoutReadOnlyEchoSchema.shape,
});
export type SaveLayoutBody = z.infer<typeof saveLayoutBodySchema>;
export type SaveLayoutBodyInput = z.input<typeof saveLayoutBodySchema>;

/** Error codes of `PUT /api/layouts/:slug`, so a client can tell the cases apart. */
export const LAYOUT_EDIT_ERRORS = {
  /** 409: someone else saved first; `details[0].path` is `$.revision`. */
  stale: "stale_revision",
  /** 409: the layout is archived and read-only. */
  archived: "archived",
  /** 400: the records themselves are wrong (paths into the body). */
  invalid: "invalid_layout",
  /** 400: the live rulebook would no longer validate; paths into the body or `$.rulebook…`. */
  breaksLive: "breaks_live_rulebook",
} as const;

/** Reply to archive and restore. */
export interface ArchiveResponse {
  slug: string;
  archived: boolean;
  archivedAt: string | null;
}

// ───────────────────────────── templates ─────────────────────────────

/** One junction template as `GET /api/templates` lists it. */
export interface TemplateDto {
  id: string;
  name: string;
  /** One paragraph in plain words: what junction it suits and how it works. */
  description: string;
  /** The options as JSON Schema (draft 2020-12), from the template's zod schema. */
  optionsSchema: Record<string, unknown>;
  /** One valid options object (Fernmoor names), to start a form from. */
  example: Record<string, unknown>;
}
export interface TemplatesResponse {
  templates: TemplateDto[];
}

/** `POST /api/templates/:id`. Errors on `options` come back as paths like `$.options.routes[0].signal`. */
export const generateTemplateBodySchema = z.strictObject({ options: z.unknown() });
export type GenerateTemplateBody = z.infer<typeof generateTemplateBodySchema>;
/** The generated rulebook, in canonical key order; nothing is saved. */
export interface GeneratedRulebookResponse {
  rulebook: Rulebook;
}

// ───────────────────────────── publishing ─────────────────────────────

export const PUBLISH_REASON_MAX = 500;

/**
 * `POST /api/layouts/:slug/rulebooks/:version/publish`. A version whose last proof did not
 * prove it (never proved, refuted or unfinished) is published only with `withoutProof:true`
 * and a reason, which the audit log keeps.
 */
export const publishBodySchema = z
  .strictObject({
    withoutProof: z.boolean().optional(),
    reason: z.string().trim().min(1, "must not be empty").max(PUBLISH_REASON_MAX).optional(),
  })
  .refine((body) => !body.withoutProof || body.reason !== undefined, { path: ["reason"], message: "publishing without proof needs a reason" });
export type PublishBody = z.infer<typeof publishBodySchema>;

/** The last proof of a version, in brief, as the versions list shows it. */
export type ProofVerdict = ProofResultDto["verdict"];
