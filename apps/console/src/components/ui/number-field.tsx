import { useId, type InputHTMLAttributes, type ReactNode, type Ref } from "react";
import { cn } from "../../lib/cn.ts";
import { FieldFrame, fieldDescribedBy } from "./field-frame.tsx";

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
  return (
    <FieldFrame
      id={id}
      label={
        <>
          {label}
          <span className="sr-only"> in {unit}</span>
        </>
      }
      hint={hint}
      error={error}
      warning={warning}
      className={className}
    >
      <div className="relative flex items-center">
        <input
          id={id}
          ref={ref}
          type="number"
          step="any"
          inputMode="decimal"
          aria-invalid={error ? true : undefined}
          aria-describedby={fieldDescribedBy(id, { hint, error, warning })}
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
    </FieldFrame>
  );
}
