/**
 * Who may connect with which client id, publish where and subscribe to what
 * (CONTRACT.md §2, revision 2). Pure: the broker asks, this module decides.
 *
 * Client ids are bound to identities so that no client can take over another identity's
 * session (an MQTT broker hands a session to whoever connects with its client id):
 * - a board connects only as `{layout}.{node}`;
 * - ids starting with `blocklight-` are reserved for the server, whose client ids are
 *   `blocklight-server.{layout}` (one per running layout; the bare `blocklight-server` of
 *   revision 1 is still accepted for the server's credentials).
 */
import { TOPIC_ROOT, topics } from "@shared/contract/live";
import { filterWithin } from "@shared/contract/topicMatch";

export type BrokerIdentity = { kind: "server" } | { kind: "node"; layout: string; node: string; credential?: NodeCredential };

/** Which stored secret let a board in: when it changes or goes, the connection must go too (broker/credentialWatch.ts). */
export interface NodeCredential {
  layoutId: number;
  secretHash: string;
}

/** The identity without its credential, for logs. */
export const loggableIdentity = (identity: BrokerIdentity | undefined) =>
  identity?.kind === "node" ? { kind: identity.kind, layout: identity.layout, node: identity.node } : identity;

export const RESERVED_CLIENT_ID_PREFIX = "blocklight-";
export const SERVER_CLIENT_ID_PREFIX = "blocklight-server";

/** The one client id a board may use (CONTRACT.md §2, board duty 1). */
export const boardClientId = (layout: string, node: string) => `${layout}.${node}`;

/** Why `clientId` may not be used with `identity`'s credentials, or null when it may. */
export function clientIdRefusal(identity: BrokerIdentity, clientId: string): string | null {
  if (identity.kind === "server") {
    const rest = clientId.slice(SERVER_CLIENT_ID_PREFIX.length);
    if (clientId.startsWith(SERVER_CLIENT_ID_PREFIX) && (rest === "" || rest.startsWith("."))) return null;
    return `the server's credentials are accepted only with a client id "${SERVER_CLIENT_ID_PREFIX}.{layout}"`;
  }
  const expected = boardClientId(identity.layout, identity.node);
  if (clientId === expected) return null;
  return `board ${identity.node} of ${identity.layout} must connect with client id "${expected}"`;
}

/** The topics a board publishes to the server; the server's `applied` for it is not one. */
export function boardMayPublish(identity: Extract<BrokerIdentity, { kind: "node" }>, topic: string): boolean {
  const prefix = topics.nodePrefix(identity.layout, identity.node);
  if (!topic.startsWith(prefix) || topic.length === prefix.length) return false;
  return topic !== `${prefix}applied`;
}

/** The filters a board may subscribe within: its layout's commands and status, its own confirmations. */
export function boardSubscriptionScope(identity: Extract<BrokerIdentity, { kind: "node" }>): string[] {
  const root = `${TOPIC_ROOT}/${identity.layout}`;
  return [topics.signalFilter(identity.layout), `${root}/points/#`, `${root}/server/status`, `${topics.nodePrefix(identity.layout, identity.node)}applied`];
}

export function boardMaySubscribe(identity: Extract<BrokerIdentity, { kind: "node" }>, filter: string): boolean {
  return boardSubscriptionScope(identity).some((allowed) => filterWithin(filter, allowed));
}

export function describeScope(identity: BrokerIdentity | undefined, what: "publish" | "subscribe"): string {
  if (identity?.kind !== "node") return "nothing";
  if (what === "publish") return `${topics.nodePrefix(identity.layout, identity.node)}… (except applied)`;
  return boardSubscriptionScope(identity).join(", ");
}
