import { useState } from "react";
import { withdrawVersionSchema, type ProfileVersion } from "@jogwright/shared";
import { Dialog, DialogFormActions } from "../../../components/ui/dialog.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { TextAreaField } from "../../../components/ui/text-area-field.tsx";
import { useWithdrawVersion } from "../hooks/use-profiles.ts";

/**
 * The author takes a submission back from the review queue. The note is optional (the server records
 * "withdrawn by its author" without one) and stays with the version in its history.
 */
export function WithdrawDialog({ version, onClose, onDone }: { version: ProfileVersion | null; onClose: () => void; onDone: (version: ProfileVersion) => void }) {
  return (
    <Dialog open={version !== null} onClose={onClose} title={version ? `Withdraw v${version.number} from review` : ""}>
      {version ? <WithdrawForm key={version.id} version={version} onCancel={onClose} onDone={onDone} /> : null}
    </Dialog>
  );
}

function WithdrawForm({ version, onCancel, onDone }: { version: ProfileVersion; onCancel: () => void; onDone: (version: ProfileVersion) => void }) {
  const withdraw = useWithdrawVersion();
  const [note, setNote] = useState("");
  const parsed = withdrawVersionSchema.safeParse({ note });
  const noteError = parsed.success ? undefined : parsed.error.issues[0]?.message;
  return (
    <form
      noValidate
      className="flex flex-col gap-4"
      onSubmit={(event) => {
        event.preventDefault();
        if (!parsed.success) return;
        withdraw.mutate({ versionId: version.id, note: parsed.data.note }, { onSuccess: onDone });
      }}
    >
      <p className="text-sm text-ink-300">
        It leaves the review queue and cannot be approved; submit it again as a new version if you change your mind.
      </p>
      <TextAreaField label="Note" hint="Optional. Why you take it back; shown in the version history." error={noteError} value={note} onChange={(e) => setNote(e.target.value)} />
      {withdraw.isError ? (
        <Message tone="stop" title="Not withdrawn">
          {withdraw.error.message}
        </Message>
      ) : null}
      <DialogFormActions onCancel={onCancel} isPending={withdraw.isPending} submitLabel="Withdraw" pendingLabel="Withdrawing…" submitVariant="danger" />
    </form>
  );
}
