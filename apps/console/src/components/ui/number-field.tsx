import { useId, useState, type ChangeEvent, type FocusEvent, type InputHTMLAttributes, type ReactNode, type Ref } from "react";
import { normalizeDecimalText } from "../../lib/format.ts";
import { FieldFrame, fieldControlProps } from "./field-frame.tsx";

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

/**
 * A labelled number input with its unit, a hint, an error and a warning tied to it for screen readers.
 *
 * A form field (react-hook-form's `register`, uncontrolled) is a text box with the decimal keypad, not
 * `type="number"`: Chromium drops a typed comma there, so "150,5" became 1505 (issue 13, item 12). A
 * decimal comma counts as a point: while typing, the form gets the number the text means (the box keeps
 * what was typed, since "1,5" may still become "1,500"), and on leaving the box "150,5" reads "150.5".
 * "1,500", which could mean either, is refused with a message. A controlled field (`value` given: the
 * bench's sweep and edits boxes, which read `valueAsNumber`) stays a number input.
 */
export function NumberField({ label, unit, hint, error, warning, className, ref, onChange, onBlur, ...input }: NumberFieldProps) {
  const id = useId();
  const [isAmbiguous, setAmbiguous] = useState(false);
  const isControlled = input.value !== undefined;
  const onTextChange = (event: ChangeEvent<HTMLInputElement>) => {
    const text = event.target.value;
    const read = normalizeDecimalText(text);
    setAmbiguous(read.isAmbiguous);
    if (!text.includes(",")) {
      onChange?.(event);
      return;
    }
    // react-hook-form reads a target without a `type` as the value itself (its documented custom-input
    // form `{ target: { name, value } }`), so the form holds the number while the box keeps the text.
    const value = read.isAmbiguous || read.text.trim() === "" ? Number.NaN : Number(read.text);
    onChange?.({ type: "change", target: { name: event.target.name, value } } as unknown as ChangeEvent<HTMLInputElement>);
  };
  const onTextBlur = (event: FocusEvent<HTMLInputElement>) => {
    const read = normalizeDecimalText(event.target.value);
    if (!read.isAmbiguous && read.text !== event.target.value) event.target.value = read.text;
    onBlur?.(event);
  };
  const shownError = isAmbiguous && !isControlled ? `Write 1.5 or 1500: a comma before three digits could mean either` : error;
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
      error={shownError}
      warning={warning}
      className={className}
    >
      <div className="relative flex items-center">
        <input
          ref={ref}
          {...(isControlled ? { type: "number", step: "any" } : { type: "text", autoComplete: "off", spellCheck: false })}
          inputMode="decimal"
          {...fieldControlProps(
            id,
            { hint, error: shownError, warning },
            "num h-10 w-full rounded-md border bg-ink-800 pr-16 pl-3 text-base text-ink-100 placeholder:text-ink-400 disabled:text-ink-300",
          )}
          {...input}
          {...(isControlled ? { onChange, onBlur } : { onChange: onTextChange, onBlur: onTextBlur })}
        />
        <span aria-hidden className="num pointer-events-none absolute right-3 text-xs text-ink-400">
          {unit}
        </span>
      </div>
    </FieldFrame>
  );
}
