import { useCallback, useState } from "react";
import { UserPlus } from "lucide-react";
import type { User } from "@jogwright/shared";
import { PageHeader } from "../../../components/layout/page-header.tsx";
import { Button } from "../../../components/ui/button.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { useUsers } from "../hooks/use-users.ts";
import { ConfirmActiveDialog } from "./confirm-active-dialog.tsx";
import { CreateUserDialog } from "./create-user-dialog.tsx";
import { EditUserDialog } from "./edit-user-dialog.tsx";
import { UsersTable } from "./users-table.tsx";
import { QueryStatus } from "../../../components/ui/query-status.tsx";

export function UsersPage({ currentUserId }: { currentUserId: string }) {
  const users = useUsers();
  const [isCreating, setCreating] = useState(false);
  const [editing, setEditing] = useState<User | null>(null);
  const [toggling, setToggling] = useState<User | null>(null);
  const [notice, setNotice] = useState<string | null>(null);

  const onEdit = useCallback((user: User) => setEditing(user), []);
  const onToggleActive = useCallback((user: User) => setToggling(user), []);

  return (
    <>
      <PageHeader
        title="Users"
        description="Accounts and their roles. A person may hold several roles; deactivated accounts cannot sign in."
        actions={
          <Button variant="primary" onClick={() => setCreating(true)}>
            <UserPlus aria-hidden className="size-4" /> New user
          </Button>
        }
      />
      {notice ? (
        <Message tone="ok" className="mb-4">
          {notice}
        </Message>
      ) : null}
      <QueryStatus query={users} loading="Loading users…" failed="Could not load the users" />
      {users.data ? (
        <UsersTable users={users.data} currentUserId={currentUserId} onEdit={onEdit} onToggleActive={onToggleActive} />
      ) : null}
      <CreateUserDialog
        open={isCreating}
        onClose={() => setCreating(false)}
        onCreated={(user) => setNotice(`Created ${user.username} (${user.displayName}).`)}
      />
      <EditUserDialog
        user={editing}
        onClose={() => setEditing(null)}
        onSaved={(user) => setNotice(`Saved changes to ${user.username}.`)}
      />
      <ConfirmActiveDialog user={toggling} onClose={() => setToggling(null)} />
    </>
  );
}
