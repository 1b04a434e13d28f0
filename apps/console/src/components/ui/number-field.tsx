import { useId, type InputHTMLAttributes, type ReactNode, type Ref } from "react";
import { cn } from "../../lib/cn.ts";

export interface NumberFieldProps extends Omit<InputHTMLAttributes<HTMLInputElement>, "id" | "type"> {
  label: string;
  /** The unit the value is typed in, shown inside the input and read with the label. */
  unit: string;
  hint?: ReactNode;
  error?: string | undefined;
  /** A caution that does not block saving (e.g. above a site ceiling). */
  warning?: string | undefined;
  ref?: Ref<HTMLInputElement>;
}

/** A labelled number input with its unit, a hint, an error and a warning tied to it for screen readers. */
export function NumberField({ label, unit, hint, error, warning, className, ref, ...input }: NumberFieldProps) {
  const id = useId();
  const hintId = `${id}-hint`;
  const errorId = `${id}-error`;
  const warningId = `${id}-warning`;
  const describedBy = [hint ? hintId : null, error ? errorId : null, warning ? warningId : null].filter(Boolean).join(" ") || undefined;
  return (
    <div className={cn("flex flex-col gap-1.5", className)}>
      <label htmlFor={id} className="text-sm font-semibold text-ink-100">
        {label}
        <span className="sr-only"> in {unit}</span>
      </label>
      <div className="relative flex items-center">
        <input
          id={id}
          ref={ref}
          type="number"
          step="any"
          inputMode="decimal"
          aria-invalid={error ? true : undefined}
          aria-describedby={describedBy}
          className={cn(
            "num h-10 w-full rounded-md border bg-ink-800 pr-16 pl-3 text-base text-ink-100 placeholder:text-ink-400 disabled:text-ink-300",
            error ? "border-stop-400" : warning ? "border-warn-400" : "border-ink-600 hover:border-ink-400",
          )}
          {...input}
        />
        <span aria-hidden className="num pointer-events-none absolute right-3 text-xs text-ink-400">
          {unit}
        </span>
      </div>
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
      {warning ? (
        <p id={warningId} className="text-sm text-warn-400" data-testid="ceiling-warning">
          Above the site ceiling: {warning}
        </p>
      ) : null}
    </div>
  );
}
