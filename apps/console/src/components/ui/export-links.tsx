import { Download } from "lucide-react";

/**
 * Links to a resource's streamed exports (`<base>/export.csv` and `<base>/export.json`): the server sends
 * each as an attachment, so the browser downloads it with the session cookie. The CSV names its units in
 * the header (t_s, q1_rad, tcp_x_m, …); the JSON carries a `units` object.
 */
export function ExportLinks({ base, what }: { base: string; what: string }) {
  const link = "inline-flex h-7 items-center gap-1.5 rounded-md border border-ink-600 bg-ink-800 px-2.5 text-xs font-semibold text-ink-100 hover:border-ink-400";
  return (
    <span className="inline-flex gap-2">
      <a href={`${base}/export.csv`} download className={link} aria-label={`Download ${what} as CSV`}>
        <Download aria-hidden className="size-3.5" /> CSV
      </a>
      <a href={`${base}/export.json`} download className={link} aria-label={`Download ${what} as JSON`}>
        <Download aria-hidden className="size-3.5" /> JSON
      </a>
    </span>
  );
}
