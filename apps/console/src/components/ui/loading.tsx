import { LoaderCircle } from "lucide-react";

/** A spinner with a visible text, announced politely. */
export function Loading({ label = "Loading…" }: { label?: string }) {
  return (
    <p role="status" className="flex items-center gap-2 p-6 text-sm text-ink-300">
      <LoaderCircle aria-hidden className="size-4 animate-spin text-iris-400" />
      {label}
    </p>
  );
}
