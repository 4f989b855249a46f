/**
 * A maximum MQTT packet size, enforced on the wire: the fixed header of every packet says how
 * long the rest is (MQTT 3.1.1 §2.2.3), so a connection that announces a packet over the
 * limit is closed before its body is read or buffered. aedes (1.x) has no such limit of its
 * own and would buffer a 10 MB packet whole.
 */
import { Duplex } from "node:stream";
import type net from "node:net";

/**
 * Board payloads are at most 1 KiB (CONTRACT.md §2); a packet adds its topic and a few header
 * bytes. Payloads a little over 1 KiB still reach the server, which stores them as rejected
 * with the reason; anything past this is refused at the broker.
 */
export const MAX_PACKET_BYTES = 4096;

/** Walks the byte stream packet by packet without keeping any of it. */
export class PacketSizeScanner {
  private phase: "type" | "length" | "body" = "type";
  private length = 0;
  private multiplier = 1;
  private lengthBytes = 0;
  private remaining = 0;

  constructor(private readonly maxBytes: number) {}

  /** The announced size of the first packet over the limit in `chunk`, or null when all fit. */
  scan(chunk: Buffer): number | null {
    let i = 0;
    while (i < chunk.length) {
      if (this.phase === "body") {
        const skip = Math.min(this.remaining, chunk.length - i);
        this.remaining -= skip;
        i += skip;
        if (this.remaining === 0) this.phase = "type";
        continue;
      }
      const byte = chunk[i++];
      if (this.phase === "type") {
        this.phase = "length";
        this.length = 0;
        this.multiplier = 1;
        this.lengthBytes = 0;
        continue;
      }
      this.length += (byte & 0x7f) * this.multiplier;
      this.multiplier *= 128;
      this.lengthBytes++;
      const more = (byte & 0x80) !== 0;
      // A length field of more than 4 bytes is malformed (§2.2.3): treat it as too large.
      if (more && this.lengthBytes >= 4) return Number.POSITIVE_INFINITY;
      if (more) continue;
      const total = 1 + this.lengthBytes + this.length;
      if (total > this.maxBytes) return total;
      this.remaining = this.length;
      this.phase = this.length === 0 ? "type" : "body";
    }
    return null;
  }
}

/**
 * Wraps a TCP connection for aedes: bytes pass through unchanged until a packet over
 * `maxBytes` is announced; then `onTooLarge` is told and the connection is closed.
 */
export function limitPacketSize(socket: net.Socket, maxBytes: number, onTooLarge: (announcedBytes: number) => void): Duplex {
  const scanner = new PacketSizeScanner(maxBytes);
  const guarded = new Duplex({
    read() {
      socket.resume();
    },
    write(chunk: Buffer, _encoding, callback) {
      socket.write(chunk, callback);
    },
    final(callback) {
      socket.end(callback);
    },
    destroy(err, callback) {
      socket.destroy();
      callback(err);
    },
  });
  socket.on("data", (chunk: Buffer) => {
    const tooLarge = scanner.scan(chunk);
    if (tooLarge !== null) {
      onTooLarge(tooLarge);
      socket.destroy();
      return;
    }
    if (!guarded.push(chunk)) socket.pause();
  });
  socket.on("end", () => guarded.push(null));
  socket.on("close", () => guarded.destroy());
  socket.on("error", (err) => guarded.destroy(err));
  return guarded;
}
