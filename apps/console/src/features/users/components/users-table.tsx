import { useMemo } from "react";
import type { ColumnDef } from "@tanstack/react-table";
import { Pencil, UserCheck, UserX } from "lucide-react";
import { ROLES, ROLE_LABELS, type User } from "@jogwright/shared";
import { Badge } from "../../../components/ui/badge.tsx";
import { Button } from "../../../components/ui/button.tsx";
import { createdAtColumn, FilterableTable } from "../../../components/ui/data-table.tsx";

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
      createdAtColumn(),
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

  return (
    <FilterableTable
      data={users}
      columns={columns}
      sortBy="username"
      placeholder="Filter by name, e-mail, role or status"
      rowsNoun="users"
      emptyMessage={(filter) => `No user matches “${filter}”.`}
    />
  );
}
