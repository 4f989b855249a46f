/**
 * Live pushes over socket.io, attached to the HTTP server. One room per layout. A socket is
 * let in by the session cookie (a signed-in user) or by a display link's token; `live:join`
 * answers with the full LiveState, then one `live:update` per commit batch carries that
 * batch's steps, numbered on from the last (a client that sees a gap joins again).
 */
import type http from "node:http";
import { Server, type Socket } from "socket.io";
import type { AlarmDto, ClientToServerEvents, LiveUpdate, ServerToClientEvents } from "@shared/contract/live";
import { Op } from "sequelize";
import { nowMs, type AppDeps } from "../../deps";
import type { BusEvents } from "../../bus";
import { SESSION_COOKIE, resolveSession } from "../auth/service";
import { redactStateForDisplay, redactUpdateForDisplay } from "../display/redact";
import { layoutOfDisplayToken } from "./displayLinks";

interface SocketData {
  userId: number | null;
  /** The `auth_sessions` row the handshake's cookie named; the socket ends with it. */
  sessionId: string | null;
  /** sha256 of the display token this socket joined with, per layout slug. */
  displayHashes: Map<string, string>;
}

type LiveSocket = Socket<ClientToServerEvents, ServerToClientEvents, Record<string, never>, SocketData>;
export type LiveIo = Server<ClientToServerEvents, ServerToClientEvents, Record<string, never>, SocketData>;

const room = (slug: string) => `layout:${slug}`;
/** Visitor displays get the same pushes without anything about people (display/redact.ts). */
const displayRoom = (slug: string) => `display:${slug}`;

function cookieValue(header: string | undefined, name: string): string | undefined {
  if (!header) return undefined;
  for (const part of header.split(";")) {
    const eq = part.indexOf("=");
    if (eq > 0 && part.slice(0, eq).trim() === name) {
      try {
        return decodeURIComponent(part.slice(eq + 1).trim());
      } catch {
        return undefined;
      }
    }
  }
  return undefined;
}

async function sessionStillOpen(deps: AppDeps, sessionId: string): Promise<boolean> {
  const row = await deps.db.models.AuthSession.findOne({ where: { id: sessionId, expiresAt: { [Op.gt]: new Date(nowMs(deps)) } }, attributes: ["id"] });
  return row !== null;
}

/** Numbers socket servers so each one's bus listeners have an owner of their own. */
let socketServers = 0;

export function attachLiveSocket(server: http.Server, deps: AppDeps): { io: LiveIo; close(): Promise<void> } {
  const io: LiveIo = new Server(server, { serveClient: false, cors: { origin: false } });

  io.use(async (socket, next) => {
    try {
      const session = await resolveSession(deps, cookieValue(socket.handshake.headers.cookie, SESSION_COOKIE));
      socket.data.userId = session?.user.id ?? null;
      socket.data.sessionId = session?.sessionId ?? null;
      socket.data.displayHashes = new Map();
      next();
    } catch (err) {
      next(err as Error);
    }
  });

  io.on("connection", (socket: LiveSocket) => {
    socket.on("live:join", async (request, ack) => {
      const reply = typeof ack === "function" ? ack : () => {};
      try {
        const slug = String(request?.slug ?? "");
        if (socket.data.sessionId !== null && !(await sessionStillOpen(deps, socket.data.sessionId))) {
          // Ended in a way nobody announced (expired): the handshake's word no longer counts.
          reply({ ok: false, error: { code: "unauthenticated", message: "your sign-in has ended: sign in again" } });
          socket.disconnect(true);
          return;
        }
        if (socket.data.userId === null) {
          const link = request?.displayToken ? await layoutOfDisplayToken(deps, request.displayToken) : null;
          if (!link || link.slug !== slug) {
            reply({ ok: false, error: { code: "unauthenticated", message: "sign in first, or open a valid display link" } });
            return;
          }
          socket.data.displayHashes.set(slug, link.tokenHash);
        }
        if (!deps.live?.runs(slug)) {
          reply({ ok: false, error: { code: "not_found", message: `no live layout "${slug}"` } });
          return;
        }
        // Join first, then read the state: an update in between is seen twice at worst
        // (its version is not above the state's), never missed.
        const visitor = socket.data.userId === null;
        await socket.join(visitor ? displayRoom(slug) : room(slug));
        const state = await deps.live.liveState(slug);
        reply({ ok: true, data: visitor ? redactStateForDisplay(state) : state });
      } catch (err) {
        deps.logger.warn({ err }, "live:join failed");
        reply({ ok: false, error: { code: "internal", message: "could not read the live state" } });
      }
    });
    socket.on("live:leave", (request) => {
      void socket.leave(room(String(request?.slug ?? "")));
      void socket.leave(displayRoom(String(request?.slug ?? "")));
    });
  });

  // Nobody in a room: no encoding, no redaction (socket.io would encode for an empty room too).
  const occupied = (name: string) => (io.sockets.adapter.rooms.get(name)?.size ?? 0) > 0;
  const onUpdate = (update: LiveUpdate) => {
    if (occupied(room(update.slug))) io.to(room(update.slug)).emit("live:update", update);
    if (occupied(displayRoom(update.slug))) io.to(displayRoom(update.slug)).emit("live:update", redactUpdateForDisplay(update));
  };
  const onAlarm = (alarm: AlarmDto & { slug: string; layoutId: number; created?: boolean }) => {
    const { layoutId: _layoutId, created: _created, ...dto } = alarm;
    io.to(room(alarm.slug)).emit("alarm:changed", dto);
  };
  const onRevoked = ({ tokenHash }: { layoutId: number; tokenHash: string }) => {
    for (const socket of io.sockets.sockets.values()) {
      if ([...socket.data.displayHashes.values()].includes(tokenHash)) socket.disconnect(true);
    }
  };
  const onSessionsEnded = (ended: BusEvents["auth.sessions-ended"][0]) => {
    for (const socket of io.sockets.sockets.values()) {
      const { userId, sessionId } = socket.data;
      if (sessionId === null) continue;
      const gone = "sessionId" in ended ? ended.sessionId === sessionId : ended.userId === userId && ended.except !== sessionId;
      if (gone) socket.disconnect(true);
    }
  };
  // One owner per socket server (tests attach several to one bus), removed together on close.
  const owner = `live-socket#${++socketServers}`;
  deps.bus.on("live.update", onUpdate, owner);
  deps.bus.on("alarm.changed", onAlarm, owner);
  deps.bus.on("display-link.revoked", onRevoked, owner);
  deps.bus.on("auth.sessions-ended", onSessionsEnded, owner);

  return {
    io,
    close: async () => {
      deps.bus.removeOwner(owner);
      await new Promise<void>((resolve) => io.close(() => resolve()));
    },
  };
}
