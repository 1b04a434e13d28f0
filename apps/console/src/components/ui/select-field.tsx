import { useId, type ReactNode, type Ref, type SelectHTMLAttributes } from "react";
import { cn } from "../../lib/cn.ts";

export interface SelectFieldProps extends Omit<SelectHTMLAttributes<HTMLSelectElement>, "id"> {
  label: string;
  hint?: ReactNode;
  error?: string | undefined;
  warning?: string | undefined;
  ref?: Ref<HTMLSelectElement>;
  children: ReactNode;
}

/** A labelled native select with an optional hint, error and warning. */
export function SelectField({ label, hint, error, warning, className, ref, children, ...select }: SelectFieldProps) {
  const id = useId();
  const describedBy = [hint ? `${id}-hint` : null, error ? `${id}-error` : null, warning ? `${id}-warning` : null].filter(Boolean).join(" ") || undefined;
  return (
    <div className={cn("flex flex-col gap-1.5", className)}>
      <label htmlFor={id} className="text-sm font-semibold text-ink-100">
        {label}
      </label>
      <select
        id={id}
        ref={ref}
        aria-invalid={error ? true : undefined}
        aria-describedby={describedBy}
        className={cn(
          "h-10 rounded-md border bg-ink-800 px-3 text-base text-ink-100",
          error ? "border-stop-400" : warning ? "border-warn-400" : "border-ink-600 hover:border-ink-400",
        )}
        {...select}
      >
        {children}
      </select>
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
          Above the site ceiling: {warning}
        </p>
      ) : null}
    </div>
  );
}
