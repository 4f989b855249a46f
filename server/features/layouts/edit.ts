/**
 * Creating and editing layouts in the product (CONTRACT.md §6): a new empty layout, saving the
 * records with optimistic locking on `revision`, archive and restore.
 *
 * A save is refused, and nothing changes, when the revision is stale (someone else saved
 * first), when the records are wrong in themselves, or when the live rulebook would no longer
 * validate against them — the rulebook running on the boards must always match the records.
 */
import type { ArchiveResponse, CreateLayoutBody } from "@shared/contract/layoutEdit";
import { capErrors } from "@shared/contract/errorCap";
import { LAYOUT_EDIT_ERRORS } from "@shared/contract/layoutEdit";
import type { LayoutDetail } from "@shared/contract/rest";
import { liveRulebookErrors } from "@shared/layout/liveCheck";
import { validateLayoutRecords, type ValidationError } from "@shared/rulebook/validate";
import type { Layout } from "../../db/models";
import type { AppDeps } from "../../deps";
import { HttpError, conflict } from "../../http/errors";
import { detailOf, findLayout, refuseIfArchived } from "../../data/layouts";
import { writeRecords } from "../../data/layoutRecords";
import { readSaveBody } from "./saveBody";

export async function createLayout(deps: AppDeps, body: CreateLayoutBody, userId: number): Promise<LayoutDetail> {
  const { Layout, AuditEntry } = deps.db.models;
  const layout = await deps.db.sequelize.transaction(async (transaction) => {
    if (await Layout.findOne({ where: { slug: body.slug }, transaction })) throw conflict(`a layout with slug "${body.slug}" already exists`);
    const created = await Layout.create(
      { slug: body.slug, name: body.name, scaleName: body.scale.name, scaleRatio: body.scale.ratio, schematic: null, liveVersion: null },
      { transaction },
    );
    await AuditEntry.create(
      { layoutId: created.id, userId, action: "create-layout", target: body.slug, reason: null, before: null, after: { name: body.name, scale: body.scale } },
      { transaction },
    );
    return created;
  });
  return detailOf(deps, layout);
}

const invalid = (code: string, message: string, details: ValidationError[]) => new HttpError(400, code, message, capErrors(details));

/**
 * Replaces the records and schematic of a layout. `body` is the request body as sent: a
 * layout file without rulebook plus `revision`, or what `GET` returned, changed (saveBody.ts).
 */
export async function saveLayout(deps: AppDeps, slug: string, body: unknown, userId: number): Promise<LayoutDetail> {
  const { revision, errors: bodyErrors, records: input } = readSaveBody(body);
  const checked = validateLayoutRecords(input);
  const errors: ValidationError[] = [...(revision.ok ? [] : [revision.error]), ...bodyErrors];
  if (!checked.ok) errors.push(...checked.errors);
  else if (checked.records.slug !== slug) errors.push({ path: "$.slug", message: `the slug cannot change (it is "${slug}"; the boards' topics use it)` });
  if (errors.length > 0 || !checked.ok || !revision.ok) {
    throw invalid(LAYOUT_EDIT_ERRORS.invalid, `the layout has ${errors.length} error(s)`, errors);
  }
  const records = checked.records;
  const { Layout, RulebookVersion, AuditEntry } = deps.db.models;

  const layout = await deps.db.sequelize.transaction(async (transaction) => {
    // The row lock makes two saves of one revision queue up: the second then sees it is stale.
    const row = await Layout.findOne({ where: { slug }, transaction, lock: transaction.LOCK.UPDATE });
    if (!row) return findLayout(deps, slug); // throws 404
    refuseIfArchived(row);
    if (row.revision !== revision.value) {
      throw new HttpError(409, LAYOUT_EDIT_ERRORS.stale, `someone else saved this layout first (it is now at revision ${row.revision}, you edited revision ${revision.value}); reload it to see their changes`, [
        { path: "$.revision", message: `revision ${row.revision} is the current one` },
      ]);
    }
    if (row.liveVersion !== null) {
      const live = await RulebookVersion.findOne({ where: { layoutId: row.id, version: row.liveVersion }, transaction });
      const broken = live ? liveRulebookErrors(records, live.rulebook, live.version) : [];
      if (broken.length > 0) {
        throw invalid(
          LAYOUT_EDIT_ERRORS.breaksLive,
          `the live rulebook (version ${row.liveVersion}) would no longer match these records: publish a rulebook that fits them first, or keep what it uses`,
          broken,
        );
      }
    }
    const before = { revision: row.revision, name: row.name };
    await writeRecords(deps, row.id, records, transaction);
    await row.update(
      {
        name: records.name,
        scaleName: records.scale.name,
        scaleRatio: records.scale.ratio,
        schematic: records.schematic ?? null,
        revision: row.revision + 1,
        updatedAt: new Date(),
      },
      { transaction },
    );
    await AuditEntry.create(
      {
        layoutId: row.id,
        userId,
        action: "edit-layout",
        target: slug,
        reason: null,
        before,
        after: { revision: row.revision, name: row.name, counts: countsOf(records) },
      },
      { transaction },
    );
    return row;
  });
  deps.bus.emit("layout.nodes-changed", { layoutId: layout.id, slug });
  deps.bus.emit("layout.records-changed", { layoutId: layout.id, slug, revision: layout.revision });
  return detailOf(deps, layout);
}

function countsOf(records: { lines: unknown[]; detectors: unknown[]; signals: unknown[]; points: unknown[]; nodes: unknown[] }) {
  return { lines: records.lines.length, detectors: records.detectors.length, signals: records.signals.length, points: records.points.length, nodes: records.nodes.length };
}

/** Archives (stops running live, read-only) or restores a layout; repeating either changes nothing. */
export async function setArchived(deps: AppDeps, slug: string, archived: boolean, userId: number): Promise<ArchiveResponse> {
  const { Layout, AuditEntry } = deps.db.models;
  const { layout, changed } = await deps.db.sequelize.transaction(async (transaction) => {
    const row: Layout | null = await Layout.findOne({ where: { slug }, transaction, lock: transaction.LOCK.UPDATE });
    if (!row) return { layout: await findLayout(deps, slug), changed: false };
    if (Boolean(row.archivedAt) === archived) return { layout: row, changed: false };
    const before = { archivedAt: row.archivedAt?.toISOString() ?? null };
    await row.update({ archivedAt: archived ? new Date() : null }, { transaction });
    await AuditEntry.create(
      { layoutId: row.id, userId, action: archived ? "archive-layout" : "restore-layout", target: slug, reason: null, before, after: { archivedAt: row.archivedAt?.toISOString() ?? null } },
      { transaction },
    );
    return { layout: row, changed: true };
  });
  if (changed) deps.bus.emit(archived ? "layout.archived" : "layout.restored", { layoutId: layout.id, slug });
  return { slug, archived: Boolean(layout.archivedAt), archivedAt: layout.archivedAt?.toISOString() ?? null };
}
