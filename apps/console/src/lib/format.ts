// Number formatting at the UI edge. Values arrive already converted to display units (mm, deg, deg/s).
const formatters = new Map<number, Intl.NumberFormat>();

/** Fixed decimals, no "-0.0" for tiny negatives, hyphen-minus sign. */
export function formatFixed(value: number, decimals: number): string {
  let f = formatters.get(decimals);
  if (!f) {
    f = new Intl.NumberFormat("en-GB", {
      minimumFractionDigits: decimals,
      maximumFractionDigits: decimals,
      signDisplay: "negative",
      useGrouping: false,
    });
    formatters.set(decimals, f);
  }
  return f.format(value);
}

const dateTime = new Intl.DateTimeFormat("en-GB", { dateStyle: "medium", timeStyle: "short" });

export function formatDateTime(iso: string): string {
  const date = new Date(iso);
  return Number.isNaN(date.getTime()) ? iso : dateTime.format(date);
}

/**
 * A number as typed, with a decimal comma read as a decimal point (issue 13, item 12): "150,5" → "150.5",
 * ",5" → ".5". The console never groups thousands, so a comma is a decimal comma — except that "1,500"
 * (one to three digits, not a lone 0, then a comma and exactly three digits) reads as fifteen hundred to some and one and a half to
 * others: it stays as typed, is refused, and `isAmbiguous` says why. Anything else is returned unchanged.
 */
export function normalizeDecimalText(text: string): { text: string; isAmbiguous: boolean } {
  const comma = /^(\s*[-+]?\d*),(\d*\s*)$/.exec(text);
  if (!comma) return { text, isAmbiguous: false };
  if (/^\d{3}\s*$/.test(comma[2]!) && /^\s*[-+]?[1-9]\d{0,2}$/.test(comma[1]!)) return { text, isAmbiguous: true };
  return { text: `${comma[1]}.${comma[2]}`, isAmbiguous: false };
}

/**
 * A message as a sentence: a first Latin letter capitalised and a full stop at the end ("joint 1 cap … "
 * → "Joint 1 cap … ."). A symbol stays as it is: "ε above …" never becomes "Ε above …" (the Greek capital).
 */
export function asSentence(message: string): string {
  const capital = capitalized(message.trim());
  return /[.!?…]$/.test(capital) ? capital : `${capital}.`;
}

/** A first Latin letter capitalised, nothing else changed (a symbol such as ε stays as it is). */
export const capitalized = (text: string): string => (/^[a-z]/.test(text) ? text.charAt(0).toUpperCase() + text.slice(1) : text);
