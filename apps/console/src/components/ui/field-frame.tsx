import type { ReactNode } from "react";
import { cn } from "../../lib/cn.ts";
import { asSentence } from "../../lib/format.ts";

// The frame every labelled form control shares: the label above the control, then its hint, its error and
// (for values checked against the site ceilings) its warning, each with an id the control lists in
// aria-describedby so screen readers read them with it.

export interface FieldNotes {
  hint?: ReactNode;
  error?: string | undefined;
  /**
   * A caution that does not block saving (e.g. above a site ceiling), as a whole statement: "TCP linear
   * cap 300 mm/s exceeds the site ceiling of 250 mm/s". Shown as a sentence, without a prefix of its own
   * (a prefix once read "Above the site ceiling: … is below the site minimum").
   */
  warning?: string | undefined;
}

/** The control's aria-describedby: the ids of the notes it shows, or undefined when it shows none. */
export function fieldDescribedBy(id: string, { hint, error, warning }: FieldNotes): string | undefined {
  return [hint ? `${id}-hint` : null, error ? `${id}-error` : null, warning ? `${id}-warning` : null].filter(Boolean).join(" ") || undefined;
}

/**
 * What a framed control carries: its id, aria-invalid and aria-describedby for the notes it shows, and its
 * border (red with an error, amber with a warning). `look` is the rest of the control's classes.
 */
export function fieldControlProps(id: string, notes: FieldNotes, look: string) {
  return {
    id,
    "aria-invalid": notes.error ? (true as const) : undefined,
    "aria-describedby": fieldDescribedBy(id, notes),
    className: cn(look, notes.error ? "border-stop-400" : notes.warning ? "border-warn-400" : "border-ink-600 hover:border-ink-400"),
  };
}

interface FieldFrameProps extends FieldNotes {
  /** The control's id, which the label points at and the notes' ids start with. */
  id: string;
  label: ReactNode;
  className?: string | undefined;
  children: ReactNode;
}

export function FieldFrame({ id, label, hint, error, warning, className, children }: FieldFrameProps) {
  return (
    <div className={cn("flex flex-col gap-1.5", className)}>
      <label htmlFor={id} className="text-sm font-semibold text-ink-100">
        {label}
      </label>
      {children}
      {hint ? (
        <p id={`${id}-hint`} className="text-xs text-ink-400">
          {hint}
        </p>
      ) : null}
      {error ? (
        <p id={`${id}-error`} className="text-sm text-stop-400">
          {error}
        </p>
      ) : null}
      {warning ? (
        <p id={`${id}-warning`} className="text-sm text-warn-400" data-testid="ceiling-warning">
          {asSentence(warning)}
        </p>
      ) : null}
    </div>
  );
}
