import { useId, useState, type FormEvent } from "react";
import { EVENT_KINDS, EVENT_STATUSES } from "@shared/contract/live";
import type { SessionEventFilter } from "@shared/contract/sessions";
import { Button } from "../ui/Button";

const KINDS = EVENT_KINDS;
const STATUSES = EVENT_STATUSES;

interface EventLogFiltersProps {
  filter: SessionEventFilter;
  detectors: string[];
  nodes: string[];
  onChange: (filter: SessionEventFilter) => void;
}

const selectClass = "rounded-md border border-panel-600 bg-panel-950 px-2 py-1 text-ink";

/** Kind, status, detector and node apply at once; the reason search on Enter or "Search". */
export function EventLogFilters({ filter, detectors, nodes, onChange }: EventLogFiltersProps) {
  const id = useId();
  const [text, setText] = useState(filter.q ?? "");
  const set = <K extends keyof SessionEventFilter>(key: K, value: SessionEventFilter[K] | "") => {
    const next = { ...filter };
    if (value) next[key] = value as SessionEventFilter[K];
    else delete next[key];
    onChange(next);
  };
  const search = (event: FormEvent) => {
    event.preventDefault();
    set("q", text.trim());
  };

  const choice = <K extends "kind" | "status" | "detector" | "node">(key: K, label: string, options: readonly string[]) => (
    <div className="flex flex-col gap-1 text-xs font-semibold text-ink-soft">
      <label htmlFor={`${id}-${key}`}>{label}</label>
      <select id={`${id}-${key}`} className={selectClass} value={filter[key] ?? ""} onChange={(e) => set(key, e.target.value as SessionEventFilter[K])}>
        <option value="">any</option>
        {options.map((o) => (
          <option key={o} value={o}>
            {o}
          </option>
        ))}
      </select>
    </div>
  );

  return (
    <form onSubmit={search} className="flex flex-wrap items-end gap-3" aria-label="Filter the event log">
      {choice("kind", "Kind", KINDS)}
      {choice("status", "Status", STATUSES)}
      {choice("detector", "Detector", detectors)}
      {choice("node", "Node", nodes)}
      <div className="flex flex-col gap-1 text-xs font-semibold text-ink-soft">
        <label htmlFor={`${id}-q`}>Reason contains</label>
        <input id={`${id}-q`} value={text} onChange={(e) => setText(e.target.value)} className={`${selectClass} w-48`} maxLength={200} />
      </div>
      <Button type="submit">Search</Button>
      {Object.keys(filter).length > 0 ? (
        <Button
          onClick={() => {
            setText("");
            onChange({});
          }}
        >
          Clear filters
        </Button>
      ) : null}
    </form>
  );
}
