/**
 * What the live page may honestly claim (pure). The socket being connected says nothing
 * about the layout: a signal whose board is offline shows whatever that board does on its
 * own (its fail-safe danger, or nothing if it has no power), so it is drawn unknown (dark),
 * and the layout is only "live" while every board that drives or reports something is online.
 */
import type { LiveState } from "@shared/contract/live";
import type { NodeDto } from "@shared/contract/rest";
import type { ShownAspect } from "@shared/rulebook/schema";


export type LayoutStatusLevel = "live" | "boards-offline" | "fail-safe" | "no-boards";

export interface LayoutStatus {
  level: LayoutStatusLevel;
  /** One line for the header. */
  words: string;
  offline: NodeDto[];
}

const plural = (n: number, word: string) => `${n} ${word}${n === 1 ? "" : "s"}`;

export function layoutStatus(state: Pick<LiveState, "faulted" | "nodes">, nodes: NodeDto[]): LayoutStatus {
  const offline = nodes.filter((n) => !state.nodes[n.id]?.online);
  if (state.faulted) return { level: "fail-safe", words: `Fail-safe: every signal at danger (${state.faulted.reason})`, offline };
  if (nodes.length === 0) return { level: "no-boards", words: "No boards registered: nothing reaches the layout", offline };
  if (offline.length === nodes.length) return { level: "boards-offline", words: `All ${plural(nodes.length, "board")} offline: the layout is not under control`, offline };
  if (offline.length > 0)
    return { level: "boards-offline", words: `${plural(offline.length, "board")} of ${nodes.length} offline: ${offline.map((n) => n.name).join(", ")}`, offline };
  return { level: "live", words: `Live: all ${plural(nodes.length, "board")} online`, offline };
}

/** The board that drives each signal (the first that lists it). */
export function signalBoards(nodes: NodeDto[]): Record<string, NodeDto> {
  const boards: Record<string, NodeDto> = {};
  for (const node of nodes) for (const signal of node.signals) boards[signal] ??= node;
  return boards;
}

/**
 * The aspects to draw: as asked by the rulebook, except `dark` for a signal whose board is
 * offline (a signal no board drives is drawn as asked: there is no lamp to doubt).
 */
export function drawnAspects(state: Pick<LiveState, "shown" | "nodes">, nodes: NodeDto[]): Record<string, ShownAspect> {
  const boards = signalBoards(nodes);
  const drawn: Record<string, ShownAspect> = { ...state.shown };
  for (const [signal, board] of Object.entries(boards)) if (!state.nodes[board.id]?.online) drawn[signal] = "dark";
  return drawn;
}
