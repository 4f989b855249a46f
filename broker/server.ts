/**
 * The embedded MQTT broker (aedes 1.x, MQTT 3.1.1) with board authentication and the
 * access rules of CONTRACT.md §2:
 * - a board (username = node id, password = its issued secret) may publish only under
 *   `blocklight/v1/{its layout}/node/{its id}/` (not to `…/applied`) and subscribe only within
 *   its layout's `signal/#`, `points/#`, `server/status` and its own `node/{its id}/applied`;
 * - the server's own client may do anything.
 * A refused publish disconnects the board (aedes does that on an authorizePublish error);
 * a refused subscription gets a failure return code in SUBACK. Every refusal is reported to
 * `onRefusal` so the process can log it.
 */
import net from "node:net";
import { Aedes, type AuthenticateError, type Client } from "aedes";
import { topics } from "../shared/contract/live";
import { filterWithin } from "../shared/contract/topicMatch";

export type BrokerIdentity = { kind: "server" } | { kind: "node"; layout: string; node: string };

export type Authenticate = (username: string, password: string) => Promise<BrokerIdentity | null>;

export interface BrokerRefusal {
  what: "connect" | "publish" | "subscribe";
  clientId: string;
  username: string | null;
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
}

export interface RunningBroker {
  port: number;
  broker: Aedes;
  close(): Promise<void>;
}

/** What a board may subscribe to (CONTRACT.md §2). */
const boardFilters = (identity: { layout: string; node: string }) => [
  topics.signalFilter(identity.layout),
  topics.pointsFilter(identity.layout),
  topics.serverStatus(identity.layout),
  topics.applied(identity.layout, identity.node),
];

/** aedes' CONNACK return code 4: bad user name or password (MQTT 3.1.1 §3.2.2.3). */
const BAD_USERNAME_OR_PASSWORD = 4;

export async function startBroker(options: StartBrokerOptions): Promise<RunningBroker> {
  const identities = new WeakMap<Client, BrokerIdentity>();
  const usernames = new WeakMap<Client, string>();
  const refuse = (refusal: BrokerRefusal) => options.onRefusal?.(refusal);

  const broker = await Aedes.createBroker({
    authenticate(client, username, password, done) {
      const user = username ?? "";
      options
        .authenticate(user, password?.toString("utf8") ?? "")
        .then((identity) => {
          if (!identity) {
            refuse({ what: "connect", clientId: client.id, username: user || null, reason: "bad user name or password" });
            const err = new Error("bad user name or password") as AuthenticateError;
            (err as { returnCode: number }).returnCode = BAD_USERNAME_OR_PASSWORD;
            done(err, false);
            return;
          }
          identities.set(client, identity);
          usernames.set(client, user);
          done(null, true);
        })
        .catch((cause: unknown) => {
          refuse({ what: "connect", clientId: client.id, username: user || null, reason: `authentication failed: ${String(cause)}` });
          const err = new Error("server unavailable") as AuthenticateError;
          (err as { returnCode: number }).returnCode = 3;
          done(err, false);
        });
    },
    authorizePublish(client, packet, callback) {
      if (client === null) return callback(null); // the broker's own messages (e.g. wills already checked)
      const identity = identities.get(client);
      if (identity?.kind === "server") return callback(null);
      if (identity?.kind === "node") {
        const prefix = topics.nodePrefix(identity.layout, identity.node);
        if (packet.topic.startsWith(prefix) && packet.topic.length > prefix.length && packet.topic !== topics.applied(identity.layout, identity.node)) {
          return callback(null);
        }
      }
      const reason = `may publish only under ${identity?.kind === "node" ? topics.nodePrefix(identity.layout, identity.node) : "nothing"}`;
      refuse({ what: "publish", clientId: client.id, username: usernames.get(client) ?? null, topic: packet.topic, reason });
      callback(new Error(reason));
    },
    authorizeSubscribe(client, subscription, callback) {
      const identity = identities.get(client);
      if (identity?.kind === "server") return callback(null, subscription);
      if (identity?.kind === "node" && boardFilters(identity).some((allowed) => filterWithin(subscription.topic, allowed))) {
        return callback(null, subscription);
      }
      refuse({
        what: "subscribe",
        clientId: client.id,
        username: usernames.get(client) ?? null,
        topic: subscription.topic,
        reason: `may subscribe only within ${identity?.kind === "node" ? boardFilters(identity).join(", ") : "nothing"}`,
      });
      callback(null, null); // SUBACK failure code, the connection stays
    },
  });

  broker.on("client", (client) => options.onClient?.("connected", client.id, identities.get(client)));
  broker.on("clientDisconnect", (client) => options.onClient?.("disconnected", client.id, identities.get(client)));

  // Small MQTT packets (a PUBACK, then an aspect command) must not wait for Nagle's
  // algorithm and the peer's delayed ACK: that alone adds ~40 ms per hop.
  const server = net.createServer({ noDelay: true }, broker.handle);
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(options.port, options.host ?? "127.0.0.1", () => resolve());
  });
  const port = (server.address() as net.AddressInfo).port;

  return {
    port,
    broker,
    close: () =>
      new Promise<void>((resolve) => {
        broker.close(() => server.close(() => resolve()));
        // Open board connections would keep server.close waiting.
        server.unref();
      }),
  };
}
