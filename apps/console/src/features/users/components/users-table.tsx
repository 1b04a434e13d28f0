import { useMemo, useState } from "react";
import {
  flexRender,
  getCoreRowModel,
  getFilteredRowModel,
  getSortedRowModel,
  useReactTable,
  type ColumnDef,
  type SortingState,
} from "@tanstack/react-table";
import { ArrowDown, ArrowUp, ArrowUpDown, Pencil, Search, UserCheck, UserX } from "lucide-react";
import { ROLES, ROLE_LABELS, type User } from "@jogwright/shared";
import { Badge } from "../../../components/ui/badge.tsx";
import { Button } from "../../../components/ui/button.tsx";
import { formatDateTime } from "../../../lib/format.ts";

interface UsersTableProps {
  users: User[];
  currentUserId: string;
  onEdit: (user: User) => void;
  onToggleActive: (user: User) => void;
}

const rolesText = (user: User) =>
  ROLES.filter((r) => user.roles.includes(r))
    .map((r) => ROLE_LABELS[r])
    .join(", ");

export function UsersTable({ users, currentUserId, onEdit, onToggleActive }: UsersTableProps) {
  const [sorting, setSorting] = useState<SortingState>([{ id: "username", desc: false }]);
  const [filter, setFilter] = useState("");

  const columns = useMemo<ColumnDef<User>[]>(
    () => [
      {
        id: "username",
        accessorKey: "username",
        header: "User name",
        cell: (c) => <span className="num whitespace-nowrap text-ink-100">{c.row.original.username}</span>,
      },
      { id: "displayName", accessorKey: "displayName", header: "Display name" },
      { id: "email", accessorKey: "email", header: "E-mail", cell: (c) => <span className="text-ink-300">{c.row.original.email}</span> },
      {
        id: "roles",
        accessorFn: rolesText,
        header: "Roles",
        cell: (c) => (
          <span className="flex flex-wrap gap-1">
            {ROLES.filter((r) => c.row.original.roles.includes(r)).map((r) => (
              <Badge key={r} tone={r === "admin" ? "accent" : "neutral"}>
                {ROLE_LABELS[r]}
              </Badge>
            ))}
          </span>
        ),
      },
      {
        id: "status",
        accessorFn: (u) => (u.isActive ? "Active" : "Deactivated"),
        header: "Status",
        cell: (c) => <Badge tone={c.row.original.isActive ? "ok" : "stop"}>{c.getValue<string>()}</Badge>,
      },
      {
        id: "created",
        accessorKey: "createdAt",
        header: "Created",
        enableGlobalFilter: false,
        // ISO 8601 strings sort in time order.
        sortingFn: "alphanumeric",
        cell: (c) => <span className="num whitespace-nowrap text-ink-300">{formatDateTime(c.row.original.createdAt)}</span>,
      },
      {
        id: "actions",
        header: () => <span className="sr-only">Actions</span>,
        enableSorting: false,
        enableGlobalFilter: false,
        cell: (c) => {
          const user = c.row.original;
          const isSelf = user.id === currentUserId;
          return (
            <span className="flex justify-end gap-1">
              <Button size="sm" variant="ghost" onClick={() => onEdit(user)} aria-label={`Edit ${user.username}`}>
                <Pencil aria-hidden className="size-3.5" /> Edit
              </Button>
              <Button
                size="sm"
                variant="ghost"
                onClick={() => onToggleActive(user)}
                disabled={isSelf && user.isActive}
                title={isSelf && user.isActive ? "You cannot deactivate your own account." : undefined}
                aria-label={`${user.isActive ? "Deactivate" : "Reactivate"} ${user.username}`}
              >
                {user.isActive ? <UserX aria-hidden className="size-3.5" /> : <UserCheck aria-hidden className="size-3.5" />}
                {user.isActive ? "Deactivate" : "Reactivate"}
              </Button>
            </span>
          );
        },
      },
    ],
    [currentUserId, onEdit, onToggleActive],
  );

  const table = useReactTable({
    data: users,
    columns,
    state: { sorting, globalFilter: filter },
    onSortingChange: setSorting,
    onGlobalFilterChange: setFilter,
    globalFilterFn: "includesString",
    getCoreRowModel: getCoreRowModel(),
    getSortedRowModel: getSortedRowModel(),
    getFilteredRowModel: getFilteredRowModel(),
  });

  const rows = table.getRowModel().rows;
  return (
    <div className="flex flex-col gap-3">
      <div className="flex items-center gap-3">
        <label className="relative flex items-center">
          <span className="sr-only">Filter users</span>
          <Search aria-hidden className="pointer-events-none absolute left-2.5 size-4 text-ink-400" />
          <input
            type="search"
            value={filter}
            onChange={(e) => setFilter(e.target.value)}
            placeholder="Filter by name, e-mail, role or status"
            className="h-9 w-80 max-w-full rounded-md border border-ink-600 bg-ink-800 pr-3 pl-8 text-sm text-ink-100 placeholder:text-ink-400 hover:border-ink-400"
          />
        </label>
        <p className="text-sm text-ink-400" aria-live="polite">
          {rows.length === users.length ? `${users.length} users` : `${rows.length} of ${users.length} users`}
        </p>
      </div>
      <div className="overflow-x-auto rounded-lg border border-ink-700">
        <table className="w-full border-collapse text-left text-sm">
          <caption className="sr-only">Users. Select a column heading to sort by it.</caption>
          <thead className="bg-ink-800 text-ink-300">
            {table.getHeaderGroups().map((group) => (
              <tr key={group.id}>
                {group.headers.map((header) => {
                  const sorted = header.column.getIsSorted();
                  const canSort = header.column.getCanSort();
                  return (
                    <th
                      key={header.id}
                      scope="col"
                      aria-sort={sorted === "asc" ? "ascending" : sorted === "desc" ? "descending" : canSort ? "none" : undefined}
                      className="border-b border-ink-700 px-3 py-2 font-semibold"
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
                    </th>
                  );
                })}
              </tr>
            ))}
          </thead>
          <tbody>
            {rows.map((row) => (
              <tr key={row.id} className="border-b border-ink-700 last:border-b-0 hover:bg-ink-850">
                {row.getVisibleCells().map((cell) => (
                  <td key={cell.id} className="px-3 py-2 align-middle">
                    {flexRender(cell.column.columnDef.cell, cell.getContext())}
                  </td>
                ))}
              </tr>
            ))}
            {rows.length === 0 ? (
              <tr>
                <td colSpan={columns.length} className="px-3 py-6 text-center text-ink-400">
                  No user matches “{filter}”.
                </td>
              </tr>
            ) : null}
          </tbody>
        </table>
      </div>
    </div>
  );
}
