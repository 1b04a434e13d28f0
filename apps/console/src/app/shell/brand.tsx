/** The Jogwright mark: a three-joint chain ending in the accent. Our own drawing (public/favicon.svg). */
export function Brand({ className }: { className?: string }) {
  return (
    <span className={`inline-flex items-center gap-2 font-bold tracking-tight ${className ?? ""}`}>
      <svg viewBox="0 0 32 32" aria-hidden className="size-6">
        <rect width="32" height="32" rx="7" className="fill-ink-800" />
        <path d="M9 22.5 15 11l8 5" fill="none" strokeWidth="3" strokeLinecap="round" strokeLinejoin="round" className="stroke-iris-400" />
        <circle cx="9" cy="22.5" r="2.6" className="fill-ink-100" />
        <circle cx="15" cy="11" r="2.6" className="fill-ink-100" />
        <circle cx="23" cy="16" r="2.6" className="fill-iris-400" />
      </svg>
      Jogwright
    </span>
  );
}
