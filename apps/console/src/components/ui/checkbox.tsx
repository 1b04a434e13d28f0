import { useId, type InputHTMLAttributes, type Ref } from "react";

export interface CheckboxProps extends Omit<InputHTMLAttributes<HTMLInputElement>, "type" | "id"> {
  label: string;
  ref?: Ref<HTMLInputElement>;
}

export function Checkbox({ label, ref, ...input }: CheckboxProps) {
  const id = useId();
  return (
    <div className="flex items-center gap-2">
      <input id={id} ref={ref} type="checkbox" className="size-4 accent-iris-400" {...input} />
      <label htmlFor={id} className="text-sm text-ink-100">
        {label}
      </label>
    </div>
  );
}
