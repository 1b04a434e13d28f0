import { useState } from "react";
import { withdrawVersionSchema, type ProfileVersion } from "@jogwright/shared";
import { closeThen, Dialog } from "../../../components/ui/dialog.tsx";
import { NoteForm } from "../../../components/ui/note-form.tsx";
import { useWithdrawVersion } from "../hooks/use-profiles.ts";

/**
 * The author takes a submission back from the review queue. The note is optional (the server records
 * "withdrawn by its author" without one) and stays with the version in its history.
 */
export function WithdrawDialog({ version, onClose, onDone }: { version: ProfileVersion | null; onClose: () => void; onDone: (version: ProfileVersion) => void }) {
  return (
    <Dialog open={version !== null} onClose={onClose} title={version ? `Withdraw v${version.number} from review` : ""}>
      {version ? <WithdrawForm key={version.id} version={version} onCancel={onClose} onDone={closeThen(onClose, onDone)} /> : null}
    </Dialog>
  );
}

function WithdrawForm({ version, onCancel, onDone }: { version: ProfileVersion; onCancel: () => void; onDone: (version: ProfileVersion) => void }) {
  const withdraw = useWithdrawVersion();
  const [note, setNote] = useState("");
  const parsed = withdrawVersionSchema.safeParse({ note });
  const noteError = parsed.success ? undefined : parsed.error.issues[0]?.message;
  return (
    <NoteForm
      explanation={
        <p className="text-sm text-ink-300">
          It leaves the review queue and cannot be approved; submit it again as a new version if you change your mind.
        </p>
      }
      label="Note"
      hint="Optional. Why you take it back; shown in the version history."
      note={note}
      onNoteChange={setNote}
      error={noteError}
      refusal={withdraw.error}
      refusalTitle="Not withdrawn"
      onSubmit={() => {
        if (parsed.success) withdraw.mutate({ versionId: version.id, note: parsed.data.note }, { onSuccess: onDone });
      }}
      onCancel={onCancel}
      isPending={withdraw.isPending}
      submitLabel="Withdraw"
      pendingLabel="Withdrawing…"
      submitVariant="danger"
    />
  );
}
