/**
 * The CSV of a session's event log, both ways. One row per event, one plain value per cell, so
 * a spreadsheet can filter by signal or sort by seq: what each event kind carries (a status
 * report's `online`, a lamp-proving report's `signal`/`aspect`/`rev`, a command's target, who
 * gave it and why) has a column of its own, and the changes are one readable line. The import
 * rebuilds the engine input from those columns, and still reads the earlier export, whose
 * `input` and `changes` cells held JSON.
 */
import type { ChangeDto } from "@shared/contract/live";
import type { SessionEventDto } from "@shared/contract/sessions";
import { guardFormula, unguardFormula } from "./csvFormula";

/** The export's columns, in order. */
export const EVENT_CSV_COLUMNS = [
  "id",
  "receivedAt",
  "kind",
  "status",
  "reason",
  "node",
  "boot",
  "seq",
  "detector",
  "boardT",
  "signal",
  "aspect",
  "rev",
  "online",
  "fw",
  "command",
  "latch",
  "counter",
  "by",
  "commandReason",
  "topic",
  "user",
  "changes",
] as const;
export type EventCsvColumn = (typeof EVENT_CSV_COLUMNS)[number];

/** The columns of the export before the flat one (input and changes as JSON); still imported. */
export const JSON_CELL_CSV_COLUMNS = ["id", "receivedAt", "kind", "status", "reason", "node", "boot", "seq", "detector", "boardT", "topic", "user", "input", "changes"] as const;

/** Columns a hand-made flat CSV must have; every other column may be left out. */
export const REQUIRED_CSV_COLUMNS = ["receivedAt", "kind", "status"] as const;

function csvCell(value: unknown): string {
  if (value === null || value === undefined) return "";
  const text = typeof value === "string" ? guardFormula(value) : typeof value === "number" || typeof value === "boolean" ? String(value) : JSON.stringify(value);
  return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

const plain = (value: unknown) => (typeof value === "string" ? value : JSON.stringify(value ?? null));

/** One change as a reader says it: `shown M1: danger -> clear (rule give-main)`. */
function changeText(change: ChangeDto): string {
  const cause = change.rule ? ` (rule ${change.rule})` : change.command ? ` (command ${change.command})` : "";
  const detail = change.detail ? ` [${change.detail}]` : "";
  return `${change.kind} ${change.name}: ${plain(change.from)} -> ${plain(change.to)}${cause}${detail}`;
}

/** The fields of an event's input that have a column, for the kinds that carry them. */
function inputCells(event: SessionEventDto): Partial<Record<EventCsvColumn, unknown>> {
  const input = event.input && typeof event.input === "object" ? (event.input as Record<string, unknown>) : null;
  if (!input) return {};
  switch (event.kind) {
    case "status":
      return { online: input.online, fw: input.fw };
    case "shown":
      return { signal: input.signal, aspect: input.aspect, rev: input.rev };
    case "command":
      return { command: input.command, signal: input.signal, latch: input.latch, counter: input.counter, by: input.by, commandReason: input.reason };
    default:
      return {};
  }
}

/** One exported event as a CSV row (CRLF-terminated, RFC 4180 quoting). */
export function eventCsvRow(event: SessionEventDto): string {
  const cells: Record<EventCsvColumn, unknown> = {
    id: event.id,
    receivedAt: event.receivedAt,
    kind: event.kind,
    status: event.status,
    reason: event.reason,
    node: event.node,
    boot: event.boot,
    seq: event.seq,
    detector: event.detector,
    boardT: event.boardT,
    signal: null,
    aspect: null,
    rev: null,
    online: null,
    fw: null,
    command: null,
    latch: null,
    counter: null,
    by: null,
    commandReason: null,
    topic: event.topic,
    user: event.user,
    changes: event.changes.length ? event.changes.map(changeText).join("; ") : null,
    ...inputCells(event),
  };
  return EVENT_CSV_COLUMNS.map((column) => csvCell(cells[column])).join(",") + "\r\n";
}

export const EVENT_CSV_HEADER = EVENT_CSV_COLUMNS.join(",") + "\r\n";

// ───────────────────────────── reading ─────────────────────────────

/** RFC 4180 records with the physical line each starts on (a quoted cell may span lines); cells as the export guarded them (csvFormula.ts) are read as typed. */
export function* csvRecords(text: string): Generator<{ line: number; cells: string[] }> {
  let line = 1;
  let start = 1;
  let cells: string[] = [];
  let cell = "";
  let quoted = false;
  let i = 0;
  const end = () => {
    cells.push(unguardFormula(cell));
    const record = { line: start, cells };
    cells = [];
    cell = "";
    return record;
  };
  while (i < text.length) {
    const c = text[i];
    if (quoted) {
      if (c === '"' && text[i + 1] === '"') {
        cell += '"';
        i += 2;
        continue;
      }
      if (c === '"') quoted = false;
      else {
        if (c === "\n") line++;
        cell += c;
      }
      i++;
      continue;
    }
    if (c === '"') quoted = true;
    else if (c === ",") {
      cells.push(unguardFormula(cell));
      cell = "";
    } else if (c === "\n" || c === "\r") {
      if (c === "\r" && text[i + 1] === "\n") i++;
      const record = end();
      line++;
      start = line;
      if (!(record.cells.length === 1 && record.cells[0] === "")) yield record;
    } else cell += c;
    i++;
  }
  if (cell !== "" || cells.length > 0) yield end();
}

export type CsvLayout = "flat" | "json-cells";

/** Which export the header belongs to, or what is wrong with it. */
export function csvLayout(columns: string[]): { ok: true; layout: CsvLayout } | { ok: false; message: string } {
  const legacy = columns.includes("input");
  const known: readonly string[] = legacy ? JSON_CELL_CSV_COLUMNS : EVENT_CSV_COLUMNS;
  const unknown = columns.filter((c) => !known.includes(c));
  const missing = legacy
    ? JSON_CELL_CSV_COLUMNS.filter((c) => !columns.includes(c) && !["id", "user", "changes", "topic", "boardT", "reason"].includes(c))
    : REQUIRED_CSV_COLUMNS.filter((c) => !columns.includes(c));
  const duplicated = columns.filter((c, i) => columns.indexOf(c) !== i);
  if (!unknown.length && !missing.length && !duplicated.length) return { ok: true, layout: legacy ? "json-cells" : "flat" };
  const parts = [
    missing.length ? `missing ${missing.join(", ")}` : "",
    unknown.length ? `unknown ${unknown.join(", ")}` : "",
    duplicated.length ? `twice ${duplicated.join(", ")}` : "",
  ].filter(Boolean);
  return { ok: false, message: `expected the export's columns ${EVENT_CSV_COLUMNS.join(",")}: ${parts.join("; ")}` };
}

export interface CellError {
  column: string;
  message: string;
}

const NUMBER_COLUMNS = new Set(["seq", "boardT"]);
const JSON_COLUMNS = new Set(["input", "changes"]);

/** One row of the earlier export: plain cells, `input` and `changes` as JSON. */
export function jsonCellRecord(columns: string[], cells: string[]): { value: Record<string, unknown>; errors: CellError[] } {
  const value: Record<string, unknown> = {};
  const errors: CellError[] = [];
  columns.forEach((column, index) => {
    const cell = cells[index];
    if (cell === "") value[column] = null;
    else if (NUMBER_COLUMNS.has(column)) value[column] = /^-?\d+$/.test(cell) ? Number(cell) : cell;
    else if (JSON_COLUMNS.has(column)) {
      try {
        value[column] = JSON.parse(cell);
      } catch {
        errors.push({ column, message: "not JSON" });
      }
    } else value[column] = cell;
  });
  return { value, errors };
}

const COMMAND_TARGET: Record<string, "signal" | "latch" | "counter" | null> = {
  hold: "signal",
  release: "signal",
  set: "latch",
  clear: "latch",
  zero: "counter",
  restart: null,
};

/**
 * The engine input (or board payload) an event of the flat export carried, rebuilt from its
 * columns: what the runner stored as `input`, so the replay of the import is the original's.
 */
function flatInput(cells: Partial<Record<EventCsvColumn, string>>, errors: CellError[]): unknown {
  const at = Date.parse(cells.receivedAt ?? "");
  const has = (column: EventCsvColumn) => cells[column] !== undefined;
  switch (cells.kind) {
    case "tick":
      return Number.isNaN(at) ? null : { type: "tick", at };
    case "command": {
      const command = cells.command;
      if (command === undefined) return null;
      if (!(command in COMMAND_TARGET)) {
        errors.push({ column: "command", message: `expected one of ${Object.keys(COMMAND_TARGET).join(", ")}` });
        return null;
      }
      const target = COMMAND_TARGET[command];
      const input: Record<string, unknown> = { type: "command", at, command };
      if (target) {
        if (!has(target)) errors.push({ column: target, message: `a ${command} command names its ${target}` });
        input[target] = cells[target];
      }
      if (has("by")) input.by = cells.by;
      if (has("commandReason")) input.reason = cells.commandReason;
      return input;
    }
    case "status": {
      if (!has("online")) return null;
      if (cells.online !== "true" && cells.online !== "false") {
        errors.push({ column: "online", message: "expected true or false" });
        return null;
      }
      const input: Record<string, unknown> = { online: cells.online === "true" };
      if (has("boot")) input.boot = cells.boot;
      if (has("fw")) input.fw = cells.fw;
      return input;
    }
    case "shown": {
      if (!has("signal") && !has("aspect") && !has("rev")) return null;
      for (const column of ["signal", "aspect", "rev"] as const) if (!has(column)) errors.push({ column, message: "a lamp-proving report names signal, aspect and rev" });
      if (has("rev") && !/^\d{1,16}$/.test(cells.rev!)) errors.push({ column: "rev", message: "expected a whole number" });
      return { signal: cells.signal, aspect: cells.aspect, rev: Number(cells.rev) };
    }
    default:
      return null;
  }
}

/** One row of the flat export as the shape of a JSONL line (`changes` is prose here: not read). */
export function flatRecord(columns: string[], cells: string[]): { value: Record<string, unknown>; errors: CellError[] } {
  const errors: CellError[] = [];
  const present: Partial<Record<EventCsvColumn, string>> = {};
  columns.forEach((column, index) => {
    if (cells[index] !== "") present[column as EventCsvColumn] = cells[index];
  });
  // A cell that is not a number stays text, so the event's schema names the column.
  const number = (cell: string | undefined) => (cell === undefined ? null : /^-?\d{1,16}$/.test(cell) ? Number(cell) : cell);
  const value: Record<string, unknown> = {
    id: present.id ?? null,
    receivedAt: present.receivedAt ?? null,
    kind: present.kind ?? null,
    status: present.status ?? null,
    reason: present.reason ?? null,
    node: present.node ?? null,
    boot: present.boot ?? null,
    seq: number(present.seq),
    detector: present.detector ?? null,
    boardT: number(present.boardT),
    topic: present.topic ?? null,
    user: present.user ?? null,
    input: flatInput(present, errors),
  };
  return { value, errors };
}
