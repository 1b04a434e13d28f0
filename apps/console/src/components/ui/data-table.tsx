import { Fragment, useState, type ReactNode } from "react";
import { Link } from "react-router";
import {
  flexRender,
  getCoreRowModel,
  getFilteredRowModel,
  getSortedRowModel,
  useReactTable,
  type ColumnDef,
  type RowData,
  type SortingState,
  type Table,
} from "@tanstack/react-table";
import { capitalized, formatDateTime } from "../../lib/format.ts";
import { ArrowDown, ArrowUp, ArrowUpDown, Search } from "lucide-react";
import { cn } from "../../lib/cn.ts";
import { EmptyTableRow, TableFrame, TableHeadCell } from "./table-frame.tsx";

// The console's one table: a TanStack table in the console's table look (table-frame.tsx). Every page that
// lists rows uses it: columns are ColumnDefs (cells may hold links, badges, buttons or inputs), sortable
// columns get a heading button, an arrow and `aria-sort`; plus the search box and state for a client-side
// sorted, filtered table, and `useDataTable` for a plain one.

declare module "@tanstack/react-table" {
  // eslint-disable-next-line @typescript-eslint/no-unused-vars -- the generics must match TanStack's declaration to merge
  interface ColumnMeta<TData extends RowData, TValue> {
    /** Classes for this column's cells (e.g. "text-right num"). */
    className?: string;
    /** Classes for this column's heading. */
    headClassName?: string;
    /** The cells are the row's heading (`<th scope="row">`), e.g. a name. */
    isRowHeader?: boolean;
  }
}

const ROW_CLASS = {
  middle: { row: "border-b border-ink-700 last:border-b-0 hover:bg-ink-850", cell: "px-3 py-2 align-middle" },
  top: { row: "border-b border-ink-700 align-top last:border-b-0 hover:bg-ink-850", cell: "px-3 py-2" },
} as const;

/** Extra attributes for a row: a class, or `data-*` attributes that tests and styles select on. */
export type RowAttributes = { className?: string | undefined } & { [data: `data-${string}`]: string | undefined };

interface DataTableProps<Row> {
  table: Table<Row>;
  caption: ReactNode;
  /** Shown in a single row when the row model is empty (nothing loaded, or nothing matches the filter). */
  emptyMessage: ReactNode;
  testId?: string;
  /** "top" for rows whose cells wrap onto several lines. */
  verticalAlign?: keyof typeof ROW_CLASS;
  rowAttributes?: (row: Row) => RowAttributes;
  /** Rows are shown in groups: a heading row spanning the table whenever this changes from one row to the next. */
  groupOf?: (row: Row) => string;
}

/** Renders a TanStack table: sortable columns get a heading button, an arrow and `aria-sort`. */
export function DataTable<Row>({ table, caption, emptyMessage, testId, verticalAlign = "middle", rowAttributes, groupOf }: DataTableProps<Row>) {
  const rows = table.getRowModel().rows;
  const rowClass = ROW_CLASS[verticalAlign];
  const columnCount = table.getVisibleLeafColumns().length;
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
                  className={header.column.columnDef.meta?.headClassName}
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
        {rows.map((row, i) => {
          const group = groupOf?.(row.original);
          const isNewGroup = group !== undefined && (i === 0 || groupOf?.(rows[i - 1]!.original) !== group);
          const { className, ...attributes } = rowAttributes?.(row.original) ?? {};
          return (
            <Fragment key={row.id}>
              {isNewGroup ? (
                <tr className="bg-ink-900">
                  <th colSpan={columnCount} scope="colgroup" className="border-b border-ink-700 px-3 py-1.5 text-left text-xs font-semibold text-ink-300">
                    {group}
                  </th>
                </tr>
              ) : null}
              <tr className={cn(rowClass.row, className)} {...attributes}>
                {row.getVisibleCells().map((cell) => {
                  const meta = cell.column.columnDef.meta;
                  const content = flexRender(cell.column.columnDef.cell, cell.getContext());
                  return meta?.isRowHeader ? (
                    <th key={cell.id} scope="row" className={cn(rowClass.cell, "text-left", meta.className ?? "font-normal")}>
                      {content}
                    </th>
                  ) : (
                    <td key={cell.id} className={cn(rowClass.cell, meta?.className)}>
                      {content}
                    </td>
                  );
                })}
              </tr>
            </Fragment>
          );
        })}
        {rows.length === 0 ? <EmptyTableRow colSpan={columnCount}>{emptyMessage}</EmptyTableRow> : null}
      </tbody>
    </TableFrame>
  );
}

/**
 * The "Created" column of a table whose rows carry an ISO 8601 `createdAt` (such strings sort in time order);
 * it is not searched by the filter box.
 */
export function createdAtColumn<Row extends { createdAt: string }>(): ColumnDef<Row> {
  return {
    id: "created",
    accessorKey: "createdAt",
    header: "Created",
    enableGlobalFilter: false,
    sortingFn: "alphanumeric",
    cell: (c) => <span className="num whitespace-nowrap text-ink-300">{formatDateTime(c.row.original.createdAt)}</span>,
  };
}

/** The "Name" column of a list page: the row's name, linking to its page at `hrefOf(row)`; searched by the filter box. */
export function nameLinkColumn<Row extends { name: string }>(hrefOf: (row: Row) => string, meta?: ColumnDef<Row>["meta"]): ColumnDef<Row> {
  return {
    id: "name",
    accessorKey: "name",
    header: "Name",
    cell: (c) => (
      <Link to={hrefOf(c.row.original)} className="font-semibold text-iris-300 hover:underline">
        {c.row.original.name}
      </Link>
    ),
    ...(meta ? { meta } : {}),
  };
}

/** A plain table (no sorting or filtering): rows in the order given, identified by `getRowId` (stable keys keep inputs in cells focused). */
export function useDataTable<Row>({ data, columns, getRowId }: { data: Row[]; columns: ColumnDef<Row>[]; getRowId?: (row: Row, index: number) => string }) {
  return useReactTable({ data, columns, getRowId, getCoreRowModel: getCoreRowModel() });
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

/**
 * A list page's table: sorted by the column `sortBy` at first (any heading re-sorts it), with the filter
 * box and count above it. `rowsNoun` ("arms") names the rows in the count, the caption ("Arms. Select a
 * column heading to sort by it.") and the filter box ("Filter arms"). `emptyMessage` gets the filter
 * text: nothing matches it, or there are no rows.
 */
export function FilterableTable<Row>({
  data,
  columns,
  sortBy,
  placeholder,
  rowsNoun,
  emptyMessage,
  ...display
}: {
  data: Row[];
  columns: ColumnDef<Row>[];
  sortBy: string;
  placeholder: string;
  rowsNoun: string;
  emptyMessage: (filter: string) => ReactNode;
  testId?: string;
  verticalAlign?: keyof typeof ROW_CLASS;
}) {
  const { table, filter } = useSortableFilterableTable({ data, columns, initialSort: [{ id: sortBy, desc: false }] });
  const caption = `${capitalized(rowsNoun)}. Select a column heading to sort by it.`;
  return (
    <div className="flex flex-col gap-3">
      <TableFilter table={table} label={`Filter ${rowsNoun}`} placeholder={placeholder} rowsNoun={rowsNoun} />
      <DataTable table={table} caption={caption} emptyMessage={emptyMessage(filter)} {...display} />
    </div>
  );
}
