import { createColumnHelper, tableFeatures, useTable, type ColumnDef, type RowData } from "@tanstack/react-table";

/** No optional table features: our tables are short reference lists, read in full. */
const features = tableFeatures({});
export type DataTableFeatures = typeof features;
// `any` value type: a table mixes string, number and list columns.
// eslint-disable-next-line @typescript-eslint/no-explicit-any -- column value types differ per column
export type DataColumn<T extends RowData> = ColumnDef<DataTableFeatures, T, any>;

/** Typed column builder for `DataTable`; call at module scope so columns stay stable. */
export function columnsFor<T extends RowData>() {
  return createColumnHelper<DataTableFeatures, T>();
}

interface DataTableProps<T extends RowData> {
  /** Read aloud by screen readers and printed above the table. */
  caption: string;
  columns: DataColumn<T>[];
  data: T[];
  /** Shown in place of the rows when there are none. */
  empty?: string;
  getRowId?: (row: T) => string;
}

export function DataTable<T extends RowData>({ caption, columns, data, empty = "None yet.", getRowId }: DataTableProps<T>) {
  const table = useTable({
    features,
    columns,
    data,
    getRowId: getRowId ? (row: T) => getRowId(row) : undefined,
  });
  const rows = table.getRowModel().rows;

  return (
    <div className="overflow-x-auto rounded-md border border-panel-700">
      <table className="w-full border-collapse text-left text-sm">
        <caption className="sr-only">{caption}</caption>
        <thead className="bg-panel-850 text-ink-soft">
          {table.getHeaderGroups().map((group) => (
            <tr key={group.id}>
              {group.headers.map((header) => (
                <th key={header.id} scope="col" className="px-3 py-2 font-semibold uppercase tracking-wide text-xs">
                  {header.isPlaceholder ? null : <table.FlexRender header={header} />}
                </th>
              ))}
            </tr>
          ))}
        </thead>
        <tbody>
          {rows.length === 0 ? (
            <tr>
              <td className="px-3 py-3 text-ink-faint" colSpan={columns.length}>
                {empty}
              </td>
            </tr>
          ) : (
            rows.map((row) => (
              <tr key={row.id} className="border-t border-panel-700 odd:bg-panel-900 even:bg-panel-950">
                {row.getAllCells().map((cell) => (
                  <td key={cell.id} className="px-3 py-2 align-top">
                    <table.FlexRender cell={cell} />
                  </td>
                ))}
              </tr>
            ))
          )}
        </tbody>
      </table>
    </div>
  );
}
