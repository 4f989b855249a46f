import { allows } from "@shared/contract/permissions";
import type { Role } from "@shared/contract/rest";

/**
 * What each role may do in the client, read from the one permissions table the server's route
 * guards use (shared/contract/permissions.ts). These only decide what the navigation and pages
 * offer, so nobody meets a button they cannot use; the server enforces the same rules.
 */
export const can = {
  importLayout: (role: Role) => allows(role, "layouts.import"),
  editLayout: (role: Role) => allows(role, "layouts.edit"),
  archiveLayout: (role: Role) => allows(role, "layouts.archive"),
  editRulebook: (role: Role) => allows(role, "rulebooks.edit"),
  publishRulebook: (role: Role) => allows(role, "rulebooks.publish"),
  runProof: (role: Role) => allows(role, "proofs.run"),
  /** Signallers run the live control room; everyone signed in may watch it. */
  controlLive: (role: Role) => allows(role, "live.control"),
  acknowledgeAlarm: (role: Role) => allows(role, "alarms.acknowledge"),
  /** Registering boards and issuing their MQTT secrets. */
  manageNodes: (role: Role) => allows(role, "nodes.manage"),
  importSession: (role: Role) => allows(role, "sessions.import"),
  manageMembers: (role: Role) => allows(role, "members.manage"),
  manageDisplayLinks: (role: Role) => allows(role, "display-links.manage"),
} as const;

export const ROLE_LABELS: Record<Role, string> = {
  admin: "Admin",
  engineer: "Signal engineer",
  signaller: "Signaller",
  maintainer: "Maintainer",
  viewer: "Viewer",
};
