import { useId, type InputHTMLAttributes, type ReactNode, type Ref } from "react";
import { cn } from "../../lib/cn.ts";

export interface TextFieldProps extends Omit<InputHTMLAttributes<HTMLInputElement>, "id"> {
  label: string;
  hint?: ReactNode;
  error?: string | undefined;
  ref?: Ref<HTMLInputElement>;
}

/** A labelled input with an optional hint and an error message tied to it for screen readers. */
export function TextField({ label, hint, error, className, ref, ...input }: TextFieldProps) {
  const id = useId();
  const hintId = `${id}-hint`;
  const errorId = `${id}-error`;
  const describedBy = [hint ? hintId : null, error ? errorId : null].filter(Boolean).join(" ") || undefined;
  return (
    <div className={cn("flex flex-col gap-1.5", className)}>
      <label htmlFor={id} className="text-sm font-semibold text-ink-100">
        {label}
      </label>
      <input
        id={id}
        ref={ref}
        aria-invalid={error ? true : undefined}
        aria-describedby={describedBy}
        className={cn(
          "h-10 rounded-md border bg-ink-800 px-3 text-base text-ink-100 placeholder:text-ink-400",
          error ? "border-stop-400" : "border-ink-600 hover:border-ink-400",
        )}
        {...input}
      />
      {hint ? (
        <p id={hintId} className="text-xs text-ink-400">
          {hint}
        </p>
      ) : null}
      {error ? (
        <p id={errorId} className="text-sm text-stop-400">
          {error}
        </p>
      ) : null}
    </div>
  );
}
