import type { User } from "@jogwright/shared";
import { Button } from "../../../components/ui/button.tsx";
import { Dialog } from "../../../components/ui/dialog.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { useUpdateUser } from "../hooks/use-users.ts";

/** Asks before deactivating or reactivating an account; a deactivated account cannot sign in. */
export function ConfirmActiveDialog({ user, onClose }: { user: User | null; onClose: () => void }) {
  const updateUser = useUpdateUser();
  const isDeactivating = user?.isActive ?? false;

  function close() {
    updateUser.reset();
    onClose();
  }

  return (
    <Dialog
      open={user !== null}
      onClose={close}
      title={isDeactivating ? "Deactivate account?" : "Reactivate account?"}
      description={
        user
          ? isDeactivating
            ? `${user.displayName} (${user.username}) will no longer be able to sign in. Nothing they did is deleted.`
            : `${user.displayName} (${user.username}) will be able to sign in again with their roles.`
          : undefined
      }
    >
      {updateUser.error ? (
        <Message tone="stop" title="Could not change the account" className="mb-4">
          {updateUser.error.message}
        </Message>
      ) : null}
      <div className="flex justify-end gap-2">
        <Button onClick={close}>Cancel</Button>
        <Button
          variant={isDeactivating ? "danger" : "primary"}
          disabled={updateUser.isPending || !user}
          onClick={() => {
            if (!user) return;
            updateUser.mutate({ id: user.id, patch: { isActive: !user.isActive } }, { onSuccess: close });
          }}
        >
          {isDeactivating ? "Deactivate" : "Reactivate"}
        </Button>
      </div>
    </Dialog>
  );
}
