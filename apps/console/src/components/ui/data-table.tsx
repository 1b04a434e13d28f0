import { useState, type ReactNode } from "react";
import {
  flexRender,
  getCoreRowModel,
  getFilteredRowModel,
  getSortedRowModel,
  useReactTable,
  type ColumnDef,
  type SortingState,
  type Table,
} from "@tanstack/react-table";
import { ArrowDown, ArrowUp, ArrowUpDown, Search } from "lucide-react";
import { EmptyTableRow, TableFrame, TableHeadCell } from "./table-frame.tsx";

// A TanStack table in the console's table look (table-frame.tsx): sortable columns get a heading button,
// an arrow and `aria-sort`; plus the search box and state for a client-side sorted, filtered table.

const ROW_CLASS = {
  middle: { row: "border-b border-ink-700 last:border-b-0 hover:bg-ink-850", cell: "px-3 py-2 align-middle" },
  top: { row: "border-b border-ink-700 align-top last:border-b-0 hover:bg-ink-850", cell: "px-3 py-2" },
} as const;

interface DataTableProps<Row> {
  table: Table<Row>;
  caption: ReactNode;
  /** Shown in a single row when the row model is empty (nothing loaded, or nothing matches the filter). */
  emptyMessage: ReactNode;
  testId?: string;
  /** "top" for rows whose cells wrap onto several lines. */
  verticalAlign?: keyof typeof ROW_CLASS;
}

/** Renders a TanStack table: sortable columns get a heading button, an arrow and `aria-sort`. */
export function DataTable<Row>({ table, caption, emptyMessage, testId, verticalAlign = "middle" }: DataTableProps<Row>) {
  const rows = table.getRowModel().rows;
  const rowClass = ROW_CLASS[verticalAlign];
  return (
    <TableFrame testId={testId} caption={caption}>
      <thead className="bg-ink-800 text-ink-300">
        {table.getHeaderGroups().map((group) => (
          <tr key={group.id}>
            {group.headers.map((header) => {
              const sorted = header.column.getIsSorted();
              const canSort = header.column.getCanSort();
              return (
                <TableHeadCell
                  key={header.id}
                  sort={sorted === "asc" ? "ascending" : sorted === "desc" ? "descending" : canSort ? "none" : undefined}
                >
                  {canSort ? (
                    <button
                      type="button"
                      onClick={header.column.getToggleSortingHandler()}
                      className="-mx-1 inline-flex items-center gap-1 rounded-sm px-1 hover:text-ink-100"
                    >
                      {flexRender(header.column.columnDef.header, header.getContext())}
                      {sorted === "asc" ? (
                        <ArrowUp aria-hidden className="size-3.5 text-iris-400" />
                      ) : sorted === "desc" ? (
                        <ArrowDown aria-hidden className="size-3.5 text-iris-400" />
                      ) : (
                        <ArrowUpDown aria-hidden className="size-3.5 opacity-50" />
                      )}
                    </button>
                  ) : (
                    flexRender(header.column.columnDef.header, header.getContext())
                  )}
                </TableHeadCell>
              );
            })}
          </tr>
        ))}
      </thead>
      <tbody>
        {rows.map((row) => (
          <tr key={row.id} className={rowClass.row}>
            {row.getVisibleCells().map((cell) => (
              <td key={cell.id} className={rowClass.cell}>
                {flexRender(cell.column.columnDef.cell, cell.getContext())}
              </td>
            ))}
          </tr>
        ))}
        {rows.length === 0 ? <EmptyTableRow colSpan={table.getVisibleLeafColumns().length}>{emptyMessage}</EmptyTableRow> : null}
      </tbody>
    </TableFrame>
  );
}

/** A client-side table sorted by its column headings and filtered by one search box over every filterable column. */
export function useSortableFilterableTable<Row>({ data, columns, initialSort }: { data: Row[]; columns: ColumnDef<Row>[]; initialSort: SortingState }) {
  const [sorting, setSorting] = useState<SortingState>(initialSort);
  const [filter, setFilter] = useState("");
  const table = useReactTable({
    data,
    columns,
    state: { sorting, globalFilter: filter },
    onSortingChange: setSorting,
    onGlobalFilterChange: setFilter,
    globalFilterFn: "includesString",
    getCoreRowModel: getCoreRowModel(),
    getSortedRowModel: getSortedRowModel(),
    getFilteredRowModel: getFilteredRowModel(),
  });
  return { table, filter };
}

interface TableFilterProps<Row> {
  /** A table from useSortableFilterableTable: the box edits its global filter. */
  table: Table<Row>;
  /** The search box's accessible name, e.g. "Filter users". */
  label: string;
  placeholder: string;
  /** What the rows are, in the plural: "users". */
  rowsNoun: string;
}

/** The search box above a filterable table and the live count of the rows it lets through. */
export function TableFilter<Row>({ table, label, placeholder, rowsNoun }: TableFilterProps<Row>) {
  const shownCount = table.getRowModel().rows.length;
  const totalCount = table.getCoreRowModel().rows.length;
  return (
    <div className="flex items-center gap-3">
      <label className="relative flex items-center">
        <span className="sr-only">{label}</span>
        <Search aria-hidden className="pointer-events-none absolute left-2.5 size-4 text-ink-400" />
        <input
          type="search"
          value={table.getState().globalFilter as string}
          onChange={(e) => table.setGlobalFilter(e.target.value)}
          placeholder={placeholder}
          className="h-9 w-80 max-w-full rounded-md border border-ink-600 bg-ink-800 pr-3 pl-8 text-sm text-ink-100 placeholder:text-ink-400 hover:border-ink-400"
        />
      </label>
      <p className="text-sm text-ink-400" aria-live="polite">
        {shownCount === totalCount ? `${totalCount} ${rowsNoun}` : `${shownCount} of ${totalCount} ${rowsNoun}`}
      </p>
    </div>
  );
}
