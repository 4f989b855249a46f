/**
 * Demo data (DEMO=on): the invented Fernmoor Garden Railway Society — one account per
 * role and the two demo layouts. Idempotent: only what is missing is added.
 */
import { randomBytes } from "node:crypto";
import fs from "node:fs";
import path from "node:path";
import { QueryTypes } from "sequelize";
import type { Role } from "@shared/contract/rest";
import { kestrelBankLayout, wrenfoldLoopLayout } from "@shared/demo/fernmoor";
import type { AppDeps } from "../../deps";
import { hashSecret } from "../../features/auth/service";
import { hashNodeSecret, isLegacyNodeHash } from "../../nodeSecret";
import { importLayout } from "../../features/layouts/service";
import { setSocietyName, societyName } from "../../features/setup/society";

/** Demo only: the README tells every society to change it. */
export const DEMO_PASSWORD = "blocklight-demo";
export const DEMO_DOMAIN = "fernmoor.example";
export const DEMO_SOCIETY = "Fernmoor Garden Railway Society";

export const DEMO_ACCOUNTS: { role: Role; name: string }[] = [
  { role: "admin", name: "Fernmoor Admin" },
  { role: "engineer", name: "Fernmoor Signal Engineer" },
  { role: "signaller", name: "Fernmoor Signaller" },
  { role: "maintainer", name: "Fernmoor Maintainer" },
  { role: "viewer", name: "Fernmoor Viewer" },
];

/** The demo layouts' slugs, in the order they are seeded. */
export const DEMO_LAYOUT_SLUGS = [kestrelBankLayout().slug, wrenfoldLoopLayout().slug];
const DEMO_NODE_SECRET_BYTES = 24;

export const demoEmail = (role: Role) => `${role}@${DEMO_DOMAIN}`;

export async function seedDemo(deps: AppDeps): Promise<{ usersAdded: number; layoutsAdded: string[] }> {
  const { User, Layout } = deps.db.models;
  // A society that renamed itself keeps its name.
  if (!(await societyName(deps))) await setSocietyName(deps, DEMO_SOCIETY);
  let usersAdded = 0;
  const passwordHash = await hashSecret(DEMO_PASSWORD);
  for (const account of DEMO_ACCOUNTS) {
    const [, created] = await User.findOrCreate({
      where: { email: demoEmail(account.role) },
      defaults: { email: demoEmail(account.role), name: account.name, role: account.role, passwordHash, alarmMail: account.role === "maintainer" },
    });
    if (created) usersAdded++;
  }
  const engineer = await User.findOne({ where: { email: demoEmail("engineer") } });
  const layoutsAdded: string[] = [];
  for (const file of [kestrelBankLayout(), wrenfoldLoopLayout()]) {
    if (await Layout.findOne({ where: { slug: file.slug } })) continue;
    await importLayout(deps, file, engineer?.id ?? null);
    layoutsAdded.push(file.slug);
  }
  return { usersAdded, layoutsAdded };
}

/** Where the demo boards' plain MQTT passwords are kept (demo only; see README). */
export function demoNodeSecretsFile(dataDir: string, slug: string): string {
  return path.join(dataDir, "secrets", "nodes", `${slug}.json`);
}

/** `{ "<node id>": "<plain secret>" }` as written by {@link issueDemoNodeSecrets}. */
export type NodeSecretsFile = Record<string, string>;

function readSecretsFile(file: string): NodeSecretsFile {
  if (!fs.existsSync(file)) return {};
  try {
    const parsed: unknown = JSON.parse(fs.readFileSync(file, "utf8"));
    if (!parsed || typeof parsed !== "object" || Array.isArray(parsed)) return {};
    return Object.fromEntries(Object.entries(parsed).filter((entry): entry is [string, string] => typeof entry[1] === "string"));
  } catch {
    return {};
  }
}

/**
 * Demo only: gives every board of the demo layouts an MQTT password so the fake layout can
 * connect as each board. Issues one for a node with no secret yet, or whose secret is not in
 * the file (the file is the demo's only copy of the plain text); its SHA-256 digest goes to
 * `nodes.secret_hash`, the plain secrets to `DATA_DIR/secrets/nodes/<slug>.json` (mode 0600).
 * A society running its own layouts with DEMO=off never gets such a file: real boards get
 * their secret once, from `POST /api/layouts/:slug/nodes`.
 */
export async function issueDemoNodeSecrets(deps: Pick<AppDeps, "db" | "config">): Promise<{ issued: Record<string, string[]>; files: string[] }> {
  const issued: Record<string, string[]> = {};
  const files: string[] = [];
  for (const slug of DEMO_LAYOUT_SLUGS) {
    const nodes = await deps.db.sequelize.query<{ node_id: string; secret_hash: string | null }>(
      `SELECT n.node_id, n.secret_hash FROM nodes n JOIN layouts l ON l.id = n.layout_id WHERE l.slug = :slug ORDER BY n.position`,
      { replacements: { slug }, type: QueryTypes.SELECT },
    );
    if (nodes.length === 0) continue;
    const file = demoNodeSecretsFile(deps.config.dataDir, slug);
    const secrets = readSecretsFile(file);
    const fresh: string[] = [];
    for (const node of nodes) {
      const setHash = (hash: string) =>
        deps.db.sequelize.query(
          `UPDATE nodes SET secret_hash = :hash WHERE node_id = :node AND layout_id = (SELECT id FROM layouts WHERE slug = :slug)`,
          { replacements: { hash, node: node.node_id, slug } },
        );
      if (node.secret_hash && secrets[node.node_id]) {
        // A demo from before migration 005: the plain secret is known, so store the fast form now.
        if (isLegacyNodeHash(node.secret_hash)) await setHash(hashNodeSecret(secrets[node.node_id]));
        continue;
      }
      const secret = randomBytes(DEMO_NODE_SECRET_BYTES).toString("base64url");
      await setHash(hashNodeSecret(secret));
      secrets[node.node_id] = secret;
      fresh.push(node.node_id);
    }
    if (fresh.length > 0 || !fs.existsSync(file)) {
      fs.mkdirSync(path.dirname(file), { recursive: true, mode: 0o700 });
      const tmp = `${file}.tmp`;
      fs.writeFileSync(tmp, JSON.stringify(secrets, null, 2) + "\n", { mode: 0o600 });
      fs.renameSync(tmp, file);
    }
    fs.chmodSync(file, 0o600);
    if (fresh.length > 0) issued[slug] = fresh;
    files.push(file);
  }
  return { issued, files };
}
