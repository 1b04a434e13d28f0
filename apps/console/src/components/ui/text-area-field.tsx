import { useId, type ReactNode, type Ref, type TextareaHTMLAttributes } from "react";
import { FieldFrame, fieldControlProps } from "./field-frame.tsx";

export interface TextAreaFieldProps extends Omit<TextareaHTMLAttributes<HTMLTextAreaElement>, "id"> {
  label: string;
  hint?: ReactNode;
  error?: string | undefined;
  ref?: Ref<HTMLTextAreaElement>;
}

/** A labelled multi-line text input with an optional hint and error. */
export function TextAreaField({ label, hint, error, className, ref, rows = 3, ...area }: TextAreaFieldProps) {
  const id = useId();
  return (
    <FieldFrame id={id} label={label} hint={hint} error={error} className={className}>
      <textarea
        ref={ref}
        rows={rows}
        {...fieldControlProps(id, { hint, error }, "rounded-md border bg-ink-800 px-3 py-2 text-base text-ink-100 placeholder:text-ink-400")}
        {...area}
      />
    </FieldFrame>
  );
}
