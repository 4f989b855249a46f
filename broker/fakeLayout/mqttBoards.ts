/**
 * The fake layout's boards on MQTT: one reference board (broker/referenceBoard.ts) per node,
 * each with that board's own credentials, so the fake layout does exactly the board duties
 * of CONTRACT.md §2: client id `{layout}.{node}`, clean session off, retained status with a
 * Last Will, every pulse kept until an `applied` covers it and resent after a reconnect, and
 * the fail-safe. Trains obey what the boards SHOW (danger while a board is in fail-safe).
 */
import { topics, type AspectPayload, type PointsSetPayload } from "@shared/contract/live";
import { ReferenceBoard } from "../referenceBoard";
import type { BoardState, OutMessage } from "./player";

export interface MqttBoardsOptions {
  brokerUrl: string;
  layout: string;
  boards: BoardState[];
  /** node id → plain secret. */
  secrets: Record<string, string>;
  firmware: string;
  onAspect: (node: string, signal: string, payload: AspectPayload) => void;
  /** A points command heard by a board that reports those points. */
  onPointsSet: (node: string, points: string, payload: PointsSetPayload) => void;
  log: (line: string) => void;
}

export class MqttBoards {
  private readonly clients = new Map<string, ReferenceBoard>();
  private closing = false;

  constructor(private readonly options: MqttBoardsOptions) {}

  /** Connects every board; resolves when all are connected (or have failed once, logged). */
  async connect(): Promise<void> {
    const { brokerUrl, layout, secrets, log } = this.options;
    const driven = new Set(this.options.boards.flatMap((b) => b.signals));
    await Promise.all(
      this.options.boards.map(async (state) => {
        const board = new ReferenceBoard({
          url: brokerUrl,
          layout,
          node: state.node,
          secret: secrets[state.node] ?? "",
          boot: state.boot,
          fw: this.options.firmware,
          signals: state.signals,
          announce: true,
          onShown: (signal, aspect, rev) => this.options.onAspect(state.node, signal, { aspect, rev, at: new Date().toISOString() }),
          // A signal no board drives: trains go by the command itself.
          onPointsSet: (points, payload) => {
            if (state.points.includes(points)) this.options.onPointsSet(state.node, points, payload);
          },
          onAspect: (signal, payload) => {
            if (!driven.has(signal)) this.options.onAspect(state.node, signal, payload);
          },
        });
        this.clients.set(state.node, board);
        try {
          await board.start();
          log(`board ${state.node} connected as ${board.clientId} (boot ${state.boot})`);
        } catch (err) {
          const auth = /auth|password/i.test((err as Error).message) ? " (check the board's secret: --secrets FILE)" : "";
          log(`board ${state.node}: ${(err as Error).message}${auth}`);
        }
      }),
    );
  }

  send(message: OutMessage): void {
    const board = this.clients.get(message.node);
    // An aspect that arrives while the boards say goodbye would be answered on a closing client.
    if (!board || this.closing) return;
    if (message.kind === "pulse") void board.keep("pulse", message.payload);
    else if (message.kind === "points") void board.keep("points", message.payload);
    else {
      // Lamp-proving reports are sent once, best effort: a lost one is the server's to notice.
      board.publishRaw(topics.shown(this.options.layout, message.node), JSON.stringify(message.payload)).catch((err: unknown) => {
        if (!this.closing) this.options.log(`board ${message.node}: ${(err as Error).message}`);
      });
    }
  }

  /** Says goodbye properly: retained offline status, then a clean disconnect. */
  async close(): Promise<void> {
    this.closing = true;
    await Promise.all([...this.clients.values()].map((board) => board.end()));
  }
}
