import { useEffect, useId, useRef, type ReactNode } from "react";
import { X } from "lucide-react";
import { cn } from "../../lib/cn.ts";
import { Button } from "./button.tsx";

interface DialogProps {
  open: boolean;
  onClose: () => void;
  title: string;
  description?: ReactNode;
  children: ReactNode;
  className?: string;
}

/**
 * A modal built on the native <dialog> element: the browser traps focus, closes on Escape and restores
 * focus to the opener. Rendered only while open.
 */
export function Dialog({ open, onClose, title, description, children, className }: DialogProps) {
  const ref = useRef<HTMLDialogElement>(null);
  const titleId = useId();
  const descriptionId = useId();

  useEffect(() => {
    const dialog = ref.current;
    if (!dialog) return;
    if (open && !dialog.open) dialog.showModal();
    if (!open && dialog.open) dialog.close();
  }, [open]);

  if (!open) return null;
  return (
    <dialog
      ref={ref}
      aria-labelledby={titleId}
      aria-describedby={description ? descriptionId : undefined}
      onCancel={(event) => {
        event.preventDefault();
        onClose();
      }}
      className={cn(
        "m-auto w-[min(34rem,calc(100vw-2rem))] rounded-lg border border-ink-700 bg-ink-850 p-0 text-ink-100 shadow-2xl",
        className,
      )}
    >
      <div className="flex items-start justify-between gap-4 border-b border-ink-700 px-5 py-4">
        <div className="flex flex-col gap-1">
          <h2 id={titleId} className="text-lg font-bold">
            {title}
          </h2>
          {description ? (
            <p id={descriptionId} className="text-sm text-ink-300">
              {description}
            </p>
          ) : null}
        </div>
        <button
          type="button"
          onClick={onClose}
          aria-label="Close"
          className="rounded-md p-1 text-ink-300 hover:bg-ink-800 hover:text-ink-100"
        >
          <X aria-hidden className="size-5" />
        </button>
      </div>
      <div className="px-5 py-4">{children}</div>
    </dialog>
  );
}

/**
 * What a dialog hands its form as the form's "done": the dialog closes (as Cancel would close it), then the
 * page hears the result. A page's onDone / onSaved / onCreated so says only what follows (a notice, a
 * selection), never that its dialog closes.
 */
export function closeThen<Result extends unknown[]>(onClose: () => void, onDone: (...result: Result) => void): (...result: Result) => void {
  return (...result) => {
    onClose();
    onDone(...result);
  };
}

interface DialogFormActionsProps {
  onCancel: () => void;
  isPending: boolean;
  submitLabel: string;
  /** Shown on the submit button, which is disabled, while the request runs: "Saving…". */
  pendingLabel: string;
  submitVariant?: "primary" | "danger";
}

/** Cancel and submit, right-aligned at the foot of a dialog's form. */
export function DialogFormActions({ onCancel, isPending, submitLabel, pendingLabel, submitVariant = "primary" }: DialogFormActionsProps) {
  return (
    <div className="flex justify-end gap-2 pt-2">
      <Button onClick={onCancel}>Cancel</Button>
      <Button type="submit" variant={submitVariant} disabled={isPending}>
        {isPending ? pendingLabel : submitLabel}
      </Button>
    </div>
  );
}
