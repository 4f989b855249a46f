/**
 * The one socket.io client of the app (STYLE.md habit 3): created on first use, outside
 * React, typed with the contract's event maps. Hooks in src/hooks wrap it; nothing else
 * opens a socket.
 */
import { io, type Socket } from "socket.io-client";
import type { Ack, ClientToServerEvents, LiveState, ServerToClientEvents } from "@shared/contract/live";

export type LiveSocket = Socket<ServerToClientEvents, ClientToServerEvents>;

/** First retry after a drop; doubles up to the maximum while the clubroom network is down. */
export const RECONNECT_DELAY_MS = 500;
export const RECONNECT_DELAY_MAX_MS = 5_000;
/** A join that gets no answer in this time is retried by the caller. */
export const JOIN_TIMEOUT_MS = 8_000;

let socket: LiveSocket | null = null;

export function liveSocket(): LiveSocket {
  if (!socket) {
    socket = io({
      // Same origin, default path (/socket.io); the session cookie goes with the handshake.
      withCredentials: true,
      autoConnect: false,
      reconnection: true,
      reconnectionDelay: RECONNECT_DELAY_MS,
      reconnectionDelayMax: RECONNECT_DELAY_MAX_MS,
      randomizationFactor: 0.3,
      transports: ["websocket", "polling"],
    });
  }
  return socket;
}

export class JoinError extends Error {
  constructor(
    readonly code: string,
    message: string,
  ) {
    super(message);
    this.name = "JoinError";
  }
}

/** Joins a layout's room; resolves with the full state to start from. */
export function joinLive(slug: string, displayToken?: string): Promise<LiveState> {
  const s = liveSocket();
  return new Promise((resolve, reject) => {
    s.timeout(JOIN_TIMEOUT_MS).emit("live:join", { slug, ...(displayToken ? { displayToken } : {}) }, (err: Error | null, reply: Ack<LiveState>) => {
      if (err) return reject(new JoinError("timeout", "the server did not answer the join in time"));
      if (reply.ok) resolve(reply.data);
      else reject(new JoinError(reply.error.code, reply.error.message));
    });
  });
}

export function leaveLive(slug: string): void {
  if (socket?.connected) socket.emit("live:leave", { slug });
}

let users = 0;
/** Connects on the first user and disconnects after the last, so idle pages hold no socket. */
export function acquireLiveSocket(): LiveSocket {
  const s = liveSocket();
  users++;
  if (!s.connected && !s.active) s.connect();
  return s;
}
export function releaseLiveSocket(): void {
  users = Math.max(0, users - 1);
  if (users === 0) socket?.disconnect();
}
