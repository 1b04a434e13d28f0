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
