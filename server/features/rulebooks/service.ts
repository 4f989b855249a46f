/**
 * Rulebook versions: draft → proved → published. Versions are never edited in place: a
 * change is a new draft, so what ran on any day can be read back exactly.
 */
import type { RulebookVersionDetail } from "../../../shared/contract/rest";
import { validateRulebookFile } from "../../../shared/rulebook/validate";
import type { AppDeps } from "../../deps";
import { HttpError, notFound } from "../../http/errors";
import { exportLayout, findLayout, listVersions } from "../layouts/service";

export async function readVersion(deps: AppDeps, slug: string, version: number): Promise<RulebookVersionDetail> {
  const layout = await findLayout(deps, slug);
  const row = await deps.db.models.RulebookVersion.findOne({ where: { layoutId: layout.id, version } });
  if (!row) throw notFound(`rulebook version ${version} of "${slug}"`);
  const summary = (await listVersions(deps, layout)).find((v) => v.version === version)!;
  return { ...summary, rulebook: row.rulebook, proof: row.proof ?? null };
}

export async function saveDraft(deps: AppDeps, slug: string, rulebook: unknown, note: string | undefined, authorId: number): Promise<number> {
  const file = await exportLayout(deps, slug);
  const result = validateRulebookFile(rulebook, {
    detectors: file.detectors.map((d) => d.id),
    signals: file.signals.map((s) => ({ id: s.id, aspects: s.aspects })),
  });
  if (!result.ok) throw new HttpError(400, "invalid_rulebook", `the rulebook has ${result.errors.length} error(s)`, result.errors);
  const layout = await findLayout(deps, slug);
  const { RulebookVersion } = deps.db.models;
  return deps.db.sequelize.transaction(async (transaction) => {
    // Lock the layout row so two engineers saving at once get distinct version numbers.
    await deps.db.sequelize.query("SELECT id FROM layouts WHERE id = :id FOR UPDATE", { replacements: { id: layout.id }, transaction });
    const latest = (await RulebookVersion.max<number, InstanceType<typeof RulebookVersion>>("version", { where: { layoutId: layout.id }, transaction })) ?? 0;
    const created = await RulebookVersion.create(
      { layoutId: layout.id, version: latest + 1, status: "draft", rulebook: result.rulebook, proof: null, note: note ?? null, authorId, publishedAt: null },
      { transaction },
    );
    return created.version;
  });
}

export async function publishVersion(deps: AppDeps, slug: string, version: number, userId: number): Promise<void> {
  const layout = await findLayout(deps, slug);
  const { RulebookVersion, AuditEntry } = deps.db.models;
  const row = await RulebookVersion.findOne({ where: { layoutId: layout.id, version } });
  if (!row) throw notFound(`rulebook version ${version} of "${slug}"`);
  const before = layout.liveVersion;
  await deps.db.sequelize.transaction(async (transaction) => {
    await row.update({ status: "published", publishedAt: new Date() }, { transaction });
    await layout.update({ liveVersion: version }, { transaction });
    await AuditEntry.create(
      { layoutId: layout.id, userId, action: "publish-rulebook", target: `version ${version}`, reason: null, before: { liveVersion: before }, after: { liveVersion: version } },
      { transaction },
    );
  });
  deps.bus.emit("rulebook.published", { layoutId: layout.id, slug, version });
}
