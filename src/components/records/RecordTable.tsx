import { Fragment, useMemo, useState, type ReactNode } from "react";
import { createColumnHelper, tableFeatures, useTable, type ColumnDef } from "@tanstack/react-table";
import type { FieldValues } from "react-hook-form";
import type { z } from "zod";
import type { ValidationError } from "@shared/rulebook/validate";
import { Button } from "../ui/Button";
import { RowForm, rowErrors, type FieldSpec } from "./RowForm";

const features = tableFeatures({});

export interface RecordTableProps<T extends FieldValues & { id: string }> {
  /** The file's key for these records (`detectors`), used in error paths `$.detectors[2].at`. */
  kind: string;
  /** "detector": in button names and form titles. */
  noun: string;
  rows: T[];
  fields: FieldSpec<T>[];
  schema: z.ZodType<T, FieldValues>;
  blank: () => T;
  /** How a cell reads in the table (default: the value, lists joined). */
  show?: Partial<Record<keyof T & string, (row: T) => ReactNode>>;
  errors: readonly ValidationError[];
  /** Returns why a row cannot be removed (e.g. a line with detectors on it), or null. */
  cannotRemove?: (row: T) => string | null;
  readOnly?: boolean;
  onSave: (index: number | null, row: T, previousId: string | null) => void;
  onRemove: (index: number) => void;
}

const plain = (value: unknown): ReactNode => (Array.isArray(value) ? value.join(", ") || "—" : typeof value === "number" ? value.toFixed(2) : String(value ?? ""));

/**
 * A table of one kind of record with an inline form: Edit opens the form under its row, Add
 * under the table. Problems found by the server or the draft check are shown in the cell of
 * the field they name.
 */
export function RecordTable<T extends FieldValues & { id: string }>(props: RecordTableProps<T>) {
  const { kind, noun, rows, fields, schema, blank, show, errors, cannotRemove, readOnly, onSave, onRemove } = props;
  const [editing, setEditing] = useState<number | "new" | null>(null);
  const [refusal, setRefusal] = useState<string | null>(null);

  const columns = useMemo(() => {
    const col = createColumnHelper<typeof features, T>();
    return fields.map(
      (f) =>
        col.display({
          id: f.name,
          header: f.label,
          cell: (info) => {
            const row = info.row.original;
            const problems = rowErrors(errors, kind, info.row.index)[f.name] ?? [];
            return (
              <>
                <span>{show?.[f.name]?.(row) ?? plain(row[f.name])}</span>
                {problems.map((p, i) => (
                  <span key={i} className="block text-xs text-notice-error">
                    {p}
                  </span>
                ))}
              </>
            );
          },
        }) as ColumnDef<typeof features, T, unknown>,
    );
  }, [fields, errors, kind, show]);

  const table = useTable({ features, columns, data: rows, getRowId: (row) => row.id });
  const takenExcept = (index: number | null) => rows.filter((_, i) => i !== index).map((r) => r.id);
  const close = () => setEditing(null);

  return (
    <div className="space-y-2">
      <div className="overflow-x-auto rounded-md border border-panel-700">
        <table className="w-full border-collapse text-left text-sm">
          <caption className="sr-only">{`${noun[0].toUpperCase()}${noun.slice(1)} records`}</caption>
          <thead className="bg-panel-850 text-ink-soft">
            {table.getHeaderGroups().map((group) => (
              <tr key={group.id}>
                {group.headers.map((header) => (
                  <th key={header.id} scope="col" className="px-3 py-2 text-xs font-semibold uppercase tracking-wide">
                    <table.FlexRender header={header} />
                  </th>
                ))}
                {readOnly ? null : (
                  <th scope="col" className="px-3 py-2 text-xs font-semibold uppercase tracking-wide">
                    Change
                  </th>
                )}
              </tr>
            ))}
          </thead>
          <tbody>
            {rows.length === 0 ? (
              <tr>
                <td colSpan={fields.length + 1} className="px-3 py-3 text-ink-faint">
                  No {noun} records yet.
                </td>
              </tr>
            ) : null}
            {table.getRowModel().rows.map((row) => {
              const index = row.index;
              const own = rowErrors(errors, kind, index)[""] ?? [];
              return (
                <Fragment key={row.id}>
                  <tr className={`border-t border-panel-700 align-top ${Object.keys(rowErrors(errors, kind, index)).length > 0 ? "bg-aspect-danger/5" : ""}`} data-record={`${kind}:${row.original.id}`}>
                    {row.getAllCells().map((cell) => (
                      <td key={cell.id} className="px-3 py-2">
                        <table.FlexRender cell={cell} />
                      </td>
                    ))}
                    {readOnly ? null : (
                      <td className="px-3 py-2">
                        <div className="flex gap-1">
                          <Button onClick={() => setEditing(editing === index ? null : index)} aria-expanded={editing === index}>
                            Edit <span className="sr-only">{`${noun} ${row.original.id}`}</span>
                          </Button>
                          <Button
                            tone="danger"
                            onClick={() => {
                              const why = cannotRemove?.(row.original) ?? null;
                              setRefusal(why);
                              if (!why) {
                                if (editing === index) close();
                                onRemove(index);
                              }
                            }}
                          >
                            Remove <span className="sr-only">{`${noun} ${row.original.id}`}</span>
                          </Button>
                        </div>
                        {own.map((p, i) => (
                          <span key={i} className="block text-xs text-notice-error">
                            {p}
                          </span>
                        ))}
                      </td>
                    )}
                  </tr>
                  {editing === index ? (
                    <tr>
                      <td colSpan={fields.length + 1} className="px-2 pb-3">
                        <RowForm
                          title={`Edit ${noun} ${row.original.id}`}
                          fields={fields}
                          schema={schema}
                          initial={row.original}
                          takenIds={takenExcept(index)}
                          outside={rowErrors(errors, kind, index)}
                          onCancel={close}
                          onSubmit={(next) => {
                            onSave(index, next, row.original.id);
                            close();
                          }}
                        />
                      </td>
                    </tr>
                  ) : null}
                </Fragment>
              );
            })}
          </tbody>
        </table>
      </div>
      {refusal ? (
        <p role="alert" className="text-sm text-notice-error">
          {refusal}
        </p>
      ) : null}
      {readOnly ? null : editing === "new" ? (
        <RowForm
          title={`New ${noun}`}
          fields={fields}
          schema={schema}
          initial={blank()}
          takenIds={takenExcept(null)}
          outside={{}}
          onCancel={close}
          onSubmit={(row) => {
            onSave(null, row, null);
            close();
          }}
        />
      ) : (
        <Button onClick={() => setEditing("new")}>Add {noun}</Button>
      )}
    </div>
  );
}
