/**
 * Rulebook versions: draft → proved → published. Versions are never edited in place: a
 * change is a new draft, so what ran on any day can be read back exactly. Rulebooks are
 * stored in the canonical key order (shared/rulebook/canonical.ts).
 *
 * Publishing puts a version live on the boards. A version whose last proof did not prove it
 * is published only on purpose (`withoutProof` with a reason, audited): Blocklight is an
 * operating aid, not a certified interlocking, and a proof covers only its modelled trains.
 */
import type { PublishBody } from "@shared/contract/layoutEdit";
import type { RulebookVersionDetail, StoredProofDto } from "@shared/contract/rest";
import { canonicalRulebook } from "@shared/rulebook/canonical";
import { rulebookContextOf, validateRulebookFile } from "@shared/rulebook/validate";
import type { AppDeps } from "../../deps";
import { HttpError, notFound } from "../../http/errors";
import { findLayout, layoutRecords, listVersions, refuseIfArchived } from "../../data/layouts";

export async function readVersion(deps: AppDeps, slug: string, version: number): Promise<RulebookVersionDetail> {
  const layout = await findLayout(deps, slug);
  const row = await deps.db.models.RulebookVersion.findOne({ where: { layoutId: layout.id, version } });
  if (!row) throw notFound(`rulebook version ${version} of "${slug}"`);
  const summary = (await listVersions(deps, layout)).find((v) => v.version === version)!;
  return { ...summary, rulebook: canonicalRulebook(row.rulebook), proof: row.proof ?? null };
}

export async function saveDraft(deps: AppDeps, slug: string, rulebook: unknown, note: string | undefined, authorId: number): Promise<number> {
  const layout = await findLayout(deps, slug);
  refuseIfArchived(layout);
  const records = await layoutRecords(deps, layout);
  const result = validateRulebookFile(rulebook, rulebookContextOf(records));
  if (!result.ok) throw new HttpError(400, "invalid_rulebook", `the rulebook has ${result.errors.length} error(s)`, result.errors);
  const { RulebookVersion } = deps.db.models;
  return deps.db.sequelize.transaction(async (transaction) => {
    // Lock the layout row so two engineers saving at once get distinct version numbers.
    await deps.db.sequelize.query("SELECT id FROM layouts WHERE id = :id FOR UPDATE", { replacements: { id: layout.id }, transaction });
    const latest = (await RulebookVersion.max<number, InstanceType<typeof RulebookVersion>>("version", { where: { layoutId: layout.id }, transaction })) ?? 0;
    const created = await RulebookVersion.create(
      {
        layoutId: layout.id,
        version: latest + 1,
        status: "draft",
        rulebook: canonicalRulebook(result.rulebook),
        proof: null,
        note: note ?? null,
        authorId,
        publishedAt: null,
      },
      { transaction },
    );
    return created.version;
  });
}

/** What the last proof said, in words for an error message. */
function proofState(proof: StoredProofDto | null): string {
  if (!proof) return "has never been proved";
  if (proof.verdict === "refuted") return `was refuted (${proof.properties.filter((p) => p.holds === false).map((p) => p.id).join(", ")})`;
  if (proof.verdict === "unfinished") return `has only an unfinished proof${proof.reason ? ` (${proof.reason})` : ""}`;
  return "is proved";
}

export async function publishVersion(deps: AppDeps, slug: string, version: number, body: PublishBody, userId: number): Promise<void> {
  const layout = await findLayout(deps, slug);
  refuseIfArchived(layout);
  const { RulebookVersion, AuditEntry } = deps.db.models;
  const row = await RulebookVersion.findOne({ where: { layoutId: layout.id, version } });
  if (!row) throw notFound(`rulebook version ${version} of "${slug}"`);
  const proof = (row.proof as StoredProofDto | null) ?? null;
  const proved = proof?.verdict === "proved";
  if (!proved && !body.withoutProof) {
    throw new HttpError(
      400,
      "unproved",
      `version ${version} ${proofState(proof)}: prove it first, or publish it without proof by sending {"withoutProof":true,"reason":"…"} (the reason is kept in the audit log)`,
      [{ path: "$.withoutProof", message: "needed to publish a version that is not proved" }],
    );
  }
  const before = layout.liveVersion;
  await deps.db.sequelize.transaction(async (transaction) => {
    await row.update({ status: "published", publishedAt: new Date() }, { transaction });
    await layout.update({ liveVersion: version }, { transaction });
    await AuditEntry.create(
      {
        layoutId: layout.id,
        userId,
        action: proved ? "publish-rulebook" : "publish-rulebook-without-proof",
        target: `version ${version}`,
        reason: body.reason ?? null,
        before: { liveVersion: before },
        after: { liveVersion: version, verdict: proof?.verdict ?? null, ...(proved ? {} : { withoutProof: true }) },
      },
      { transaction },
    );
  });
  deps.bus.emit("rulebook.published", { layoutId: layout.id, slug, version });
}
