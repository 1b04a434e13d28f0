import { useId, type ReactNode, type Ref, type SelectHTMLAttributes } from "react";
import { cn } from "../../lib/cn.ts";
import { FieldFrame, fieldDescribedBy } from "./field-frame.tsx";

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
  return (
    <FieldFrame id={id} label={label} hint={hint} error={error} warning={warning} className={className}>
      <select
        id={id}
        ref={ref}
        aria-invalid={error ? true : undefined}
        aria-describedby={fieldDescribedBy(id, { hint, error, warning })}
        className={cn(
          "h-10 rounded-md border bg-ink-800 px-3 text-base text-ink-100",
          error ? "border-stop-400" : warning ? "border-warn-400" : "border-ink-600 hover:border-ink-400",
        )}
        {...select}
      >
        {children}
      </select>
    </FieldFrame>
  );
}
