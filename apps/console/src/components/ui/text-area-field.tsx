import { useId, type ReactNode, type Ref, type TextareaHTMLAttributes } from "react";
import { cn } from "../../lib/cn.ts";

export interface TextAreaFieldProps extends Omit<TextareaHTMLAttributes<HTMLTextAreaElement>, "id"> {
  label: string;
  hint?: ReactNode;
  error?: string | undefined;
  ref?: Ref<HTMLTextAreaElement>;
}

/** A labelled multi-line text input with an optional hint and error. */
export function TextAreaField({ label, hint, error, className, ref, rows = 3, ...area }: TextAreaFieldProps) {
  const id = useId();
  const describedBy = [hint ? `${id}-hint` : null, error ? `${id}-error` : null].filter(Boolean).join(" ") || undefined;
  return (
    <div className={cn("flex flex-col gap-1.5", className)}>
      <label htmlFor={id} className="text-sm font-semibold text-ink-100">
        {label}
      </label>
      <textarea
        id={id}
        ref={ref}
        rows={rows}
        aria-invalid={error ? true : undefined}
        aria-describedby={describedBy}
        className={cn(
          "rounded-md border bg-ink-800 px-3 py-2 text-base text-ink-100 placeholder:text-ink-400",
          error ? "border-stop-400" : "border-ink-600 hover:border-ink-400",
        )}
        {...area}
      />
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
    </div>
  );
}
