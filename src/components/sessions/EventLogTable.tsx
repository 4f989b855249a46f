import type { SessionEventDto } from "@shared/contract/sessions";
import { changeCause, describeChange } from "../../lib/simulation";
import { columnsFor, DataTable } from "../ui/DataTable";

const col = columnsFor<SessionEventDto>();

const time = (iso: string) => {
  const date = new Date(iso);
  return Number.isNaN(date.getTime()) ? iso : `${date.toLocaleTimeString("en-GB")}.${String(date.getMilliseconds()).padStart(3, "0")}`;
};

const STATUS_CLASS: Record<SessionEventDto["status"], string> = {
  accepted: "text-ink",
  duplicate: "text-aspect-caution",
  late: "text-aspect-caution",
  rejected: "text-aspect-danger",
};

function commandWords(input: unknown): string | null {
  if (typeof input !== "object" || input === null || !("command" in input)) return null;
  const c = input as { command: string; signal?: string; latch?: string; counter?: string; by?: string; reason?: string };
  const target = c.signal ?? c.latch ?? c.counter ?? "";
  return `${c.command} ${target}`.trim() + (c.reason ? ` — ${c.reason}` : "");
}

const columns = [
  col.accessor("id", { header: "Event" }),
  col.accessor("receivedAt", { header: "Received", cell: (info) => <span title={info.getValue()}>{time(info.getValue())}</span> }),
  col.accessor("kind", { header: "Kind" }),
  col.accessor("status", { header: "Status", cell: (info) => <span className={STATUS_CLASS[info.getValue()]}>{info.getValue()}</span> }),
  col.accessor("node", { header: "Node", cell: (info) => info.getValue() ?? "—" }),
  col.accessor("detector", { header: "Detector", cell: (info) => info.getValue() ?? "—" }),
  col.accessor("seq", { header: "Seq", cell: (info) => info.getValue() ?? "—" }),
  col.display({
    id: "what",
    header: "Reason or command",
    cell: (info) => {
      const e = info.row.original;
      const words = [e.reason, e.kind === "command" ? commandWords(e.input) : null, e.user ? `by ${e.user}` : null].filter(Boolean).join("; ");
      return words || "—";
    },
  }),
  col.accessor("changes", {
    header: "Changes",
    cell: (info) => {
      const changes = info.getValue();
      if (changes.length === 0) return <span className="text-ink-faint">none</span>;
      return (
        <ul className="space-y-0.5 text-xs">
          {changes.map((c, i) => (
            <li key={i}>
              {describeChange(c)} <span className="text-brass">← {changeCause(c)}</span>
            </li>
          ))}
        </ul>
      );
    },
  }),
];

/** One page of a session's event log: every message, its fate and what it changed. */
export function EventLogTable({ events }: { events: SessionEventDto[] }) {
  return <DataTable caption="Event log" columns={columns} data={events} getRowId={(e) => e.id} empty="No events match these filters." />;
}
