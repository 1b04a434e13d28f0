import { useId, type ReactNode, type Ref, type SelectHTMLAttributes } from "react";
import { FieldFrame, fieldControlProps } from "./field-frame.tsx";

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
      <select ref={ref} {...fieldControlProps(id, { hint, error, warning }, "h-10 rounded-md border bg-ink-800 px-3 text-base text-ink-100")} {...select}>
        {children}
      </select>
    </FieldFrame>
  );
}

/**
 * One `<option>` per item, showing `labelOf(item)`. The value is `valueFor(item)`, or the item itself for a
 * list of strings (a set's values: audit entities, sweep objectives).
 */
export function Options<T>({ items, labelOf, valueFor = String }: { items: readonly T[]; labelOf: (item: T) => ReactNode; valueFor?: (item: T) => string | number }) {
  return items.map((item) => {
    const value = valueFor(item);
    return (
      <option key={value} value={value}>
        {labelOf(item)}
      </option>
    );
  });
}
