import type { Role } from "../../shared/contract/rest";

/**
 * What each role may do in the client. The server enforces the same rules; these only
 * decide what the navigation and pages offer, so nobody meets a button they cannot use.
 */
export const can = {
  importLayout: (role: Role) => role === "admin" || role === "engineer",
  editRulebook: (role: Role) => role === "admin" || role === "engineer",
  publishRulebook: (role: Role) => role === "admin" || role === "engineer",
  /** Signallers run the live control room; everyone signed in may watch it. */
  controlLive: (role: Role) => role === "admin" || role === "signaller",
  /** Registering boards and issuing their MQTT secrets. */
  manageNodes: (role: Role) => role === "admin" || role === "engineer" || role === "maintainer",
} as const;

export const ROLE_LABELS: Record<Role, string> = {
  admin: "Admin",
  engineer: "Signal engineer",
  signaller: "Signaller",
  maintainer: "Maintainer",
  viewer: "Viewer",
};
