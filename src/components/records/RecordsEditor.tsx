import { useMemo } from "react";
import type { FieldValues } from "react-hook-form";
import type { z } from "zod";
import type { ValidationError } from "@shared/rulebook/validate";
import { ASPECTS } from "@shared/rulebook/schema";
import type { LayoutDraft } from "../../lib/layoutDraft";
import { lineInUse, removeRecord, saveRecord, type RecordKind } from "../../lib/recordEdits";
import { Panel } from "../ui/Panel";
import { RecordTable } from "./RecordTable";
import type { FieldSpec } from "./RowForm";
import { detectorFormSchema, lineFormSchema, nodeFormSchema, pointsFormSchema, signalFormSchema, WORKED } from "./recordSchemas";

interface RecordsEditorProps {
  draft: LayoutDraft;
  errors: readonly ValidationError[];
  readOnly: boolean;
  onChange: (next: LayoutDraft) => void;
}

// The forms work on the shared types; the casts only widen them to react-hook-form's values.
const as = <T,>(schema: z.ZodType) => schema as unknown as z.ZodType<T, FieldValues>;
type Line = LayoutDraft["lines"][number];
type Detector = LayoutDraft["detectors"][number];
type Signal = LayoutDraft["signals"][number];
type Points = LayoutDraft["points"][number] & { worked: "hand" | "power" };
type Node = LayoutDraft["nodes"][number] & { points: string[] };

/** Lines, detectors, signals, points and nodes of the draft, each a table with inline forms. */
export function RecordsEditor({ draft, errors, readOnly, onChange }: RecordsEditorProps) {
  const lineOptions = useMemo(() => draft.lines.map((l) => ({ value: l.id, label: `${l.id} — ${l.name}` })), [draft.lines]);
  const fields = useMemo(() => {
    const place = [
      { name: "line", label: "Line", type: "select", options: lineOptions },
      { name: "at", label: "At (m)", type: "number", step: "0.1", help: "metres of track from the start of the line" },
    ] as const;
    return {
      lines: [
        { name: "id", label: "Id", type: "text" },
        { name: "name", label: "Name", type: "text" },
      ] as FieldSpec<Line>[],
      detectors: [{ name: "id", label: "Id", type: "text" }, { name: "name", label: "Name", type: "text" }, ...place] as FieldSpec<Detector>[],
      signals: [
        { name: "id", label: "Id", type: "text" },
        { name: "name", label: "Name", type: "text" },
        ...place,
        { name: "aspects", label: "Aspects", type: "checks", options: ASPECTS.map((a) => ({ value: a })) },
      ] as FieldSpec<Signal>[],
      points: [
        { name: "id", label: "Id", type: "text" },
        { name: "name", label: "Name", type: "text" },
        ...place,
        { name: "worked", label: "Worked", type: "select", options: WORKED.map((w) => ({ value: w, label: w === "power" ? "power (a board drives them)" : "hand (moved by a person)" })) },
      ] as FieldSpec<Points>[],
      nodes: [
        { name: "id", label: "Id", type: "text" },
        { name: "name", label: "Name", type: "text" },
        { name: "detectors", label: "Detectors it serves", type: "checks", options: draft.detectors.map((d) => ({ value: d.id })) },
        { name: "signals", label: "Signals it drives", type: "checks", options: draft.signals.map((s) => ({ value: s.id })) },
        { name: "points", label: "Points it reports or drives", type: "checks", options: draft.points.map((p) => ({ value: p.id })) },
      ] as FieldSpec<Node>[],
    };
  }, [lineOptions, draft.detectors, draft.signals, draft.points]);

  const firstLine = draft.lines[0]?.id ?? "";
  const save = (kind: RecordKind) => (index: number | null, row: unknown, previousId: string | null) => onChange(saveRecord(draft, kind, index, row as never, previousId));
  const remove = (kind: RecordKind) => (index: number) => onChange(removeRecord(draft, kind, index));
  const common = { errors, readOnly };
  const needLine = draft.lines.length === 0 ? <p className="text-sm text-ink-faint">Add a line first: everything else stands on one.</p> : null;

  return (
    <div className="grid gap-6 xl:grid-cols-2">
      <Panel title="Lines">
        <RecordTable<Line> {...common} kind="lines" noun="line" rows={draft.lines} fields={fields.lines} schema={as<Line>(lineFormSchema)} blank={() => ({ id: "", name: "" })} cannotRemove={(l) => lineInUse(draft, l.id)} onSave={save("lines")} onRemove={remove("lines")} />
      </Panel>
      <Panel title="Detectors">
        {needLine ?? (
          <RecordTable<Detector> {...common} kind="detectors" noun="detector" rows={draft.detectors} fields={fields.detectors} schema={as<Detector>(detectorFormSchema)} blank={() => ({ id: "", name: "", line: firstLine, at: 0 })} onSave={save("detectors")} onRemove={remove("detectors")} />
        )}
      </Panel>
      <Panel title="Signals">
        {needLine ?? (
          <RecordTable<Signal> {...common} kind="signals" noun="signal" rows={draft.signals} fields={fields.signals} schema={as<Signal>(signalFormSchema)} blank={() => ({ id: "", name: "", line: firstLine, at: 0, aspects: ["danger", "clear"] })} onSave={save("signals")} onRemove={remove("signals")} />
        )}
      </Panel>
      <Panel title="Points">
        {needLine ?? (
          <RecordTable<Points>
            {...common}
            kind="points"
            noun="points"
            rows={draft.points.map((p) => ({ ...p, worked: p.worked ?? "hand" }))}
            fields={fields.points}
            schema={as<Points>(pointsFormSchema)}
            blank={() => ({ id: "", name: "", line: firstLine, at: 0, worked: "hand" })}
            onSave={save("points")}
            onRemove={remove("points")}
          />
        )}
      </Panel>
      <Panel title="Nodes (controller boards)" className="xl:col-span-2">
        <RecordTable<Node>
          {...common}
          kind="nodes"
          noun="node"
          rows={draft.nodes.map((n) => ({ ...n, points: n.points ?? [] }))}
          fields={fields.nodes}
          schema={as<Node>(nodeFormSchema)}
          blank={() => ({ id: "", name: "", detectors: [], signals: [], points: [] })}
          onSave={save("nodes")}
          onRemove={remove("nodes")}
        />
        <p className="mt-2 text-xs text-ink-faint">A board's MQTT secret is issued on the layout overview (Board credentials); it is never part of the layout file.</p>
      </Panel>
    </div>
  );
}
