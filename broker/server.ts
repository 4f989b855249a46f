/**
 * The embedded MQTT broker (aedes 1.x, MQTT 3.1.1) with board authentication and the
 * access rules of CONTRACT.md §2 (revision 2), decided in broker/acl.ts:
 * - a board (username = node id, password = its issued secret) connects only with client id
 *   `{layout}.{node}`; ids starting with `blocklight-` are the server's (CONNACK 2 otherwise),
 *   so no client can take over another identity's session;
 * - a board may publish only under `blocklight/v1/{its layout}/node/{its id}/` (not to
 *   `…/applied`) and subscribe only to its layout's `signal/#`, `points/#`, `server/status`
 *   and its own `node/{its id}/applied`; the server's own client may do anything;
 * - connect attempts are limited per remote address before any hash or database work;
 * - a packet over `maxPacketBytes` closes the connection before its body is read.
 * A refused publish disconnects the board (aedes does that on an authorizePublish error);
 * a refused subscription gets a failure return code in SUBACK. Every refusal is reported to
 * `onRefusal` so the process can log it.
 */
import net from "node:net";
import type { Duplex } from "node:stream";
import { Aedes, type AuthenticateError, type Client } from "aedes";
import { boardMayPublish, boardMaySubscribe, clientIdRefusal, describeScope, type BrokerIdentity } from "./acl";
import { ConnectLimiter, DEFAULT_CONNECT_LIMITS, type ConnectLimits } from "./connectLimiter";
import { limitPacketSize, MAX_PACKET_BYTES } from "./packetLimit";

export type { BrokerIdentity } from "./acl";

export type Authenticate = (username: string, password: string) => Promise<BrokerIdentity | null>;

export interface BrokerRefusal {
  what: "connect" | "publish" | "subscribe" | "packet";
  clientId: string;
  username: string | null;
  /** The remote address, for connect and packet refusals. */
  address?: string;
  topic?: string;
  reason: string;
}

export interface StartBrokerOptions {
  /** 0 picks a free port. */
  port: number;
  host?: string;
  authenticate: Authenticate;
  onRefusal?: (refusal: BrokerRefusal) => void;
  onClient?: (event: "connected" | "disconnected", clientId: string, identity: BrokerIdentity | undefined) => void;
  connectLimits?: ConnectLimits;
  maxPacketBytes?: number;
}

export type NodeIdentity = Extract<BrokerIdentity, { kind: "node" }>;

export interface RunningBroker {
  port: number;
  broker: Aedes;
  /** The boards connected now, by identity. */
  connectedNodes(): NodeIdentity[];
  /**
   * Drops every connected board `shouldGo` picks (not a clean disconnect, so its Last Will
   * says it is offline) and returns their client ids.
   */
  disconnectNodes(shouldGo: (identity: NodeIdentity) => boolean, reason: string): string[];
  close(): Promise<void>;
}

/** CONNACK return codes (MQTT 3.1.1 §3.2.2.3). */
const IDENTIFIER_REJECTED = 2;
const SERVER_UNAVAILABLE = 3;
const BAD_USERNAME_OR_PASSWORD = 4;

function connectError(message: string, returnCode: number): AuthenticateError {
  const err = new Error(message) as AuthenticateError;
  (err as { returnCode: number }).returnCode = returnCode;
  return err;
}

/** While an address is over its budget, one log line per this long, with the count refused. */
const OVER_BUDGET_LOG_EVERY_MS = 10_000;
/** A refused connection that never sends its CONNECT is dropped after this long. */
const REFUSED_SOCKET_TIMEOUT_MS = 5_000;
/** CONNACK with return code 3, session present 0 (MQTT 3.1.1 §3.2). */
const CONNACK_SERVER_UNAVAILABLE = Buffer.from([0x20, 0x02, 0x00, SERVER_UNAVAILABLE]);

export async function startBroker(options: StartBrokerOptions): Promise<RunningBroker> {
  const identities = new WeakMap<Client, BrokerIdentity>();
  const usernames = new WeakMap<Client, string>();
  const connectedBoards = new Set<Client>();
  const addresses = new WeakMap<Duplex, string>();
  const limiter = new ConnectLimiter(options.connectLimits ?? DEFAULT_CONNECT_LIMITS);
  const maxPacketBytes = options.maxPacketBytes ?? MAX_PACKET_BYTES;
  const refuse = (refusal: BrokerRefusal) => options.onRefusal?.(refusal);
  const overBudgetLog = new Map<string, { at: number; suppressed: number }>();
  const refuseOverBudget = (socket: net.Socket, address: string, report: (suppressed: number) => void) => {
    socket.on("error", () => {});
    socket.setTimeout(REFUSED_SOCKET_TIMEOUT_MS, () => socket.destroy());
    socket.once("data", () => socket.end(CONNACK_SERVER_UNAVAILABLE));
    const now = Date.now();
    const last = overBudgetLog.get(address);
    if (last && now - last.at < OVER_BUDGET_LOG_EVERY_MS) {
      last.suppressed++;
      return;
    }
    if (overBudgetLog.size > 10_000) overBudgetLog.clear(); // many addresses: forget rather than grow without bound
    overBudgetLog.set(address, { at: now, suppressed: 0 });
    report(last?.suppressed ?? 0);
  };
  const addressOf = (client: Client) => addresses.get(client.conn as unknown as Duplex) ?? "unknown";

  const broker = await Aedes.createBroker({
    authenticate(client, username, password, done) {
      const user = username ?? "";
      const address = addressOf(client);
      const refuseConnect = (reason: string, returnCode: number) => {
        refuse({ what: "connect", clientId: client.id, username: user || null, address, reason });
        done(connectError(reason, returnCode), false);
      };
      options
        .authenticate(user, password?.toString("utf8") ?? "")
        .then((identity) => {
          if (!identity) return refuseConnect("bad user name or password", BAD_USERNAME_OR_PASSWORD);
          const idRefusal = clientIdRefusal(identity, client.id);
          if (idRefusal) return refuseConnect(idRefusal, IDENTIFIER_REJECTED);
          limiter.refund(address);
          identities.set(client, identity);
          usernames.set(client, user);
          done(null, true);
        })
        .catch((cause: unknown) => refuseConnect(`authentication failed: ${String(cause)}`, SERVER_UNAVAILABLE));
    },
    authorizePublish(client, packet, callback) {
      if (client === null) return callback(null); // the broker's own messages (e.g. wills already checked)
      const identity = identities.get(client);
      if (identity?.kind === "server") return callback(null);
      if (identity?.kind === "node" && boardMayPublish(identity, packet.topic)) return callback(null);
      const reason = `may publish only under ${describeScope(identity, "publish")}`;
      refuse({ what: "publish", clientId: client.id, username: usernames.get(client) ?? null, topic: packet.topic, reason });
      callback(new Error(reason));
    },
    authorizeSubscribe(client, subscription, callback) {
      const identity = identities.get(client);
      if (identity?.kind === "server") return callback(null, subscription);
      if (identity?.kind === "node" && boardMaySubscribe(identity, subscription.topic)) return callback(null, subscription);
      refuse({
        what: "subscribe",
        clientId: client.id,
        username: usernames.get(client) ?? null,
        topic: subscription.topic,
        reason: `may subscribe only to ${describeScope(identity, "subscribe")}`,
      });
      callback(null, null); // SUBACK failure code, the connection stays
    },
  });

  broker.on("client", (client) => {
    if (identities.get(client)?.kind === "node") connectedBoards.add(client);
    options.onClient?.("connected", client.id, identities.get(client));
  });
  broker.on("clientDisconnect", (client) => {
    connectedBoards.delete(client);
    options.onClient?.("disconnected", client.id, identities.get(client));
  });
  const nodeIdentityOf = (client: Client) => {
    const identity = identities.get(client);
    return identity?.kind === "node" && !client.closed ? identity : null;
  };

  // Small MQTT packets (a PUBACK, then an aspect command) must not wait for Nagle's
  // algorithm and the peer's delayed ACK: that alone adds ~40 ms per hop.
  const server = net.createServer({ noDelay: true }, (socket) => {
    const address = socket.remoteAddress ?? "unknown";
    // Over its budget, an address gets CONNACK 3 from here: no aedes client, no database, no hash.
    if (!limiter.take(address)) {
      refuseOverBudget(socket, address, (suppressed) =>
        refuse({
          what: "connect",
          clientId: "",
          username: null,
          address,
          reason: `too many connect attempts from this address; refused without checking${suppressed ? ` (and ${suppressed} more in the last ${OVER_BUDGET_LOG_EVERY_MS / 1000} s)` : ""}`,
        }),
      );
      return;
    }
    const conn = limitPacketSize(socket, maxPacketBytes, (announced) => {
      const client = (conn as unknown as { client?: Client }).client;
      refuse({
        what: "packet",
        clientId: client?.id ?? "",
        username: client ? (usernames.get(client) ?? null) : null,
        address,
        reason: `a packet of ${Number.isFinite(announced) ? `${announced} bytes` : "malformed length"} is over the ${maxPacketBytes}-byte limit; connection closed`,
      });
    });
    addresses.set(conn, address);
    broker.handle(conn);
  });
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(options.port, options.host ?? "127.0.0.1", () => resolve());
  });
  const port = (server.address() as net.AddressInfo).port;

  return {
    port,
    broker,
    connectedNodes: () => [...connectedBoards].map(nodeIdentityOf).filter((identity): identity is NodeIdentity => identity !== null),
    disconnectNodes(shouldGo, reason) {
      const dropped: string[] = [];
      for (const client of connectedBoards) {
        const identity = nodeIdentityOf(client);
        if (!identity || !shouldGo(identity)) continue;
        refuse({ what: "connect", clientId: client.id, username: usernames.get(client) ?? null, reason });
        connectedBoards.delete(client);
        dropped.push(client.id);
        client.close();
      }
      return dropped;
    },
    close: () =>
      new Promise<void>((resolve) => {
        broker.close(() => server.close(() => resolve()));
        // Open board connections would keep server.close waiting.
        server.unref();
      }),
  };
}
