import { useState } from "react";
import { reconfirmVersionSchema, type ProfileVersion } from "@jogwright/shared";
import { closeThen, Dialog } from "../../../components/ui/dialog.tsx";
import { NoteForm } from "../../../components/ui/note-form.tsx";
import { useReconfirmVersion } from "../hooks/use-reviews.ts";

/**
 * Re-confirm a flagged approved version under the ceilings in force: a comment is required; the server
 * checks again that the version complies (409 otherwise), keeps the flag in the version's history, audits
 * and mails.
 */
export function ReconfirmDialog({ open, version, label, onClose, onDone }: {
  open: boolean;
  version: ProfileVersion;
  label: string;
  onClose: () => void;
  onDone: (version: ProfileVersion) => void;
}) {
  return (
    <Dialog open={open} onClose={onClose} title={`Re-confirm ${label} under the current ceilings`}>
      {open ? <ReconfirmForm version={version} onCancel={onClose} onDone={closeThen(onClose, onDone)} /> : null}
    </Dialog>
  );
}

function ReconfirmForm({ version, onCancel, onDone }: { version: ProfileVersion; onCancel: () => void; onDone: (version: ProfileVersion) => void }) {
  const reconfirm = useReconfirmVersion(version.id);
  const [comment, setComment] = useState("");
  const [isTouched, setTouched] = useState(false);
  const parsed = reconfirmVersionSchema.safeParse({ comment });
  const error = isTouched && !parsed.success ? parsed.error.issues[0]?.message : undefined;
  return (
    <NoteForm
      explanation={
        <p className="text-sm text-ink-300">
          The site ceilings were lowered below this version once. It complies with the ceilings in force now; re-confirming it lets its operator drive it again.
          The flag stays in its history, beside your re-confirmation.
        </p>
      }
      label="Comment"
      hint="Required. Recorded with your name, the time and the ceilings revision; the author and operator are mailed."
      note={comment}
      onNoteChange={setComment}
      onNoteBlur={() => setTouched(true)}
      error={error}
      refusal={reconfirm.error}
      refusalTitle="Not re-confirmed"
      onSubmit={() => {
        setTouched(true);
        if (parsed.success) reconfirm.mutate(parsed.data.comment, { onSuccess: onDone });
      }}
      onCancel={onCancel}
      isPending={reconfirm.isPending}
      submitLabel="Re-confirm"
      pendingLabel="Re-confirming…"
    />
  );
}
