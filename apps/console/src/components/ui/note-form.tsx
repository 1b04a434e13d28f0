import type { ReactNode } from "react";
import { DialogFormActions } from "./dialog.tsx";
import { Message } from "./message.tsx";
import { TextAreaField } from "./text-area-field.tsx";

interface NoteFormProps {
  /** What submitting does, above the box. */
  explanation: ReactNode;
  label: string;
  hint: string;
  note: string;
  onNoteChange: (note: string) => void;
  onNoteBlur?: () => void;
  error: string | undefined;
  /** The server's refusal of the last attempt (the mutation's error), shown under `refusalTitle`. */
  refusal: Error | null;
  refusalTitle: string;
  /** Runs on submit (the page is not reloaded); the caller checks the note and starts its request. */
  onSubmit: () => void;
  onCancel: () => void;
  isPending: boolean;
  submitLabel: string;
  pendingLabel: string;
  submitVariant?: "primary" | "danger";
}

/** A dialog's form around one note or comment: the explanation, the text box, the server's refusal, Cancel and submit. */
export function NoteForm({ explanation, label, hint, note, onNoteChange, onNoteBlur, error, refusal, refusalTitle, onSubmit, ...actions }: NoteFormProps) {
  return (
    <form
      noValidate
      className="flex flex-col gap-4"
      onSubmit={(event) => {
        event.preventDefault();
        onSubmit();
      }}
    >
      {explanation}
      <TextAreaField label={label} hint={hint} error={error} value={note} onChange={(e) => onNoteChange(e.target.value)} onBlur={onNoteBlur} />
      {refusal ? (
        <Message tone="stop" title={refusalTitle}>
          {refusal.message}
        </Message>
      ) : null}
      <DialogFormActions {...actions} />
    </form>
  );
}
