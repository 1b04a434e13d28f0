import { useId, type InputHTMLAttributes, type ReactNode, type Ref } from "react";
import { FieldFrame, fieldControlProps } from "./field-frame.tsx";

export interface TextFieldProps extends Omit<InputHTMLAttributes<HTMLInputElement>, "id"> {
  label: string;
  hint?: ReactNode;
  error?: string | undefined;
  ref?: Ref<HTMLInputElement>;
}

/** A labelled input with an optional hint and an error message tied to it for screen readers. */
export function TextField({ label, hint, error, className, ref, ...input }: TextFieldProps) {
  const id = useId();
  return (
    <FieldFrame id={id} label={label} hint={hint} error={error} className={className}>
      <input ref={ref} {...fieldControlProps(id, { hint, error }, "h-10 rounded-md border bg-ink-800 px-3 text-base text-ink-100 placeholder:text-ink-400")} {...input} />
    </FieldFrame>
  );
}
