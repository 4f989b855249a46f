/**
 * Demo data (DEMO=on): the invented Fernmoor Garden Railway Society — one account per
 * role and the two demo layouts. Idempotent: only what is missing is added.
 */
import type { Role } from "../../../shared/contract/rest";
import { kestrelBankLayout, wrenfoldLoopLayout } from "../../../shared/demo/fernmoor";
import type { AppDeps } from "../../deps";
import { hashSecret } from "../../features/auth/service";
import { importLayout } from "../../features/layouts/service";

/** Demo only: the README tells every society to change it. */
export const DEMO_PASSWORD = "blocklight-demo";
export const DEMO_DOMAIN = "fernmoor.example";

export const DEMO_ACCOUNTS: { role: Role; name: string }[] = [
  { role: "admin", name: "Fernmoor Admin" },
  { role: "engineer", name: "Fernmoor Signal Engineer" },
  { role: "signaller", name: "Fernmoor Signaller" },
  { role: "maintainer", name: "Fernmoor Maintainer" },
  { role: "viewer", name: "Fernmoor Viewer" },
];

export const demoEmail = (role: Role) => `${role}@${DEMO_DOMAIN}`;

export async function seedDemo(deps: AppDeps): Promise<{ usersAdded: number; layoutsAdded: string[] }> {
  const { User, Layout } = deps.db.models;
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
