/**
 * Acknowledge QoS 1 messages only after they are committed, without handling them one at a
 * time.
 *
 * mqtt.js hands each incoming PUBLISH to `handleMessage(packet, callback)` and sends the
 * PUBACK in that callback — but it also parses the next packet only after the callback, so
 * holding the callback until our commit would allow one commit per pulse (a few hundred a
 * second). Instead, `handleMessage` returns at once and the PUBACK it would send is held back
 * here until `release()` is called after the group commit. A connection that drops forgets
 * its held acknowledgements (their packet ids mean nothing on the next connection): the
 * broker redelivers those messages, and the pipeline stores them as duplicates if they were
 * committed.
 *
 * This leans on mqtt.js's private `_sendPacket` (5.x); the live tests cover it.
 */
import type { IPublishPacket, MqttClient } from "mqtt";

type SendPacket = (packet: { cmd: string; messageId?: number }, cb?: (err?: Error) => void, ...rest: unknown[]) => void;

export interface DeferredAcks {
  /** Call from handleMessage: returns the function that sends this packet's PUBACK. */
  hold(packet: IPublishPacket): () => void;
  /** PUBACKs held and not yet released (for tests and health). */
  pending(): number;
}

export function deferAcks(client: MqttClient): DeferredAcks {
  const internals = client as unknown as { _sendPacket: SendPacket };
  const send = internals._sendPacket.bind(client);
  let connection = 0;
  /** messageId → held PUBACK packet, for the current connection. */
  const held = new Map<number, { cmd: string; messageId?: number }>();
  /** messageIds whose PUBACK must wait. */
  const waiting = new Set<number>();

  internals._sendPacket = (packet, cb, ...rest) => {
    if (packet.cmd === "puback" && packet.messageId !== undefined && waiting.has(packet.messageId)) {
      held.set(packet.messageId, packet);
      cb?.(); // let mqtt.js parse the next packet now
      return;
    }
    send(packet, cb, ...rest);
  };
  client.on("close", () => {
    connection++;
    held.clear();
    waiting.clear();
  });

  return {
    hold(packet) {
      if (packet.qos === 0 || packet.messageId === undefined) return () => {};
      const id = packet.messageId;
      const mine = connection;
      waiting.add(id);
      return () => {
        if (connection !== mine || !waiting.has(id)) return;
        waiting.delete(id);
        const ack = held.get(id);
        held.delete(id);
        if (ack && client.connected) send(ack);
      };
    },
    pending: () => waiting.size,
  };
}
