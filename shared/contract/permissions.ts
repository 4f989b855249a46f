/**
 * Who may do what: the one table of role rules. The server's route guards
 * (`requirePermission(action)`), the client's `can` (what pages and buttons offer) and the
 * route × role test (tests/api/roles.test.ts, which reads each route's guard) all read it, so a
 * rule changes in one place.
 *
 * @example
 * allows("signaller", "live.control") // true
 * allows("viewer", "rulebooks.publish") // false
 */
import { ROLES, type Role } from "./rest";

const ENGINEERS = ["engineer", "admin"] as const;

export const PERMISSIONS = {
  /** Read anything of the society: every signed-in member. */
  read: ROLES,
  "layouts.import": ENGINEERS,
  "layouts.create": ENGINEERS,
  "layouts.edit": ENGINEERS,
  "layouts.archive": ["admin"],
  /** Register boards and issue their MQTT secrets. */
  "nodes.manage": ["engineer", "maintainer", "admin"],
  "templates.use": ENGINEERS,
  "rulebooks.edit": ENGINEERS,
  "rulebooks.publish": ENGINEERS,
  "proofs.run": ENGINEERS,
  "alarm-settings.edit": ENGINEERS,
  /** Hold, release, clear a latch, zero a counter, restart; open and close a running day. */
  "live.control": ["signaller", "admin"],
  "alarms.acknowledge": ["signaller", "maintainer", "admin"],
  "sessions.import": ["maintainer", "admin"],
  "display-links.manage": ["admin"],
  "members.manage": ["admin"],
  "outbox.read": ["admin"],
} as const satisfies Record<string, readonly Role[]>;

export type Action = keyof typeof PERMISSIONS;

export function allowedRoles(action: Action): readonly Role[] {
  return PERMISSIONS[action];
}

export function allows(role: Role, action: Action): boolean {
  return (PERMISSIONS[action] as readonly Role[]).includes(role);
}
