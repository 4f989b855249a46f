import type { Role } from "@shared/contract/rest";

/** Roles as a sentence says them ("invited as a signaller"). */
export const ROLE_WORDS: Record<Role, string> = {
  admin: "an admin",
  engineer: "a signal engineer",
  signaller: "a signaller",
  maintainer: "a maintainer",
  viewer: "a viewer",
};
