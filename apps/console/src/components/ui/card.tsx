import { useId, type ReactNode } from "react";
import { cn } from "../../lib/cn.ts";

/** A titled panel (ink-850 fill, rounded-lg); `actions` sit at the right of the title. */
export function Card({ title, description, actions, children, className, titleId }: {
  title?: string;
  description?: ReactNode;
  actions?: ReactNode;
  children: ReactNode;
  className?: string;
  titleId?: string;
}) {
  const ownId = useId();
  const headingId = titleId ?? ownId;
  return (
    <section aria-labelledby={title ? headingId : undefined} className={cn("rounded-lg border border-ink-700 bg-ink-850 p-5", className)}>
      {title || actions ? (
        <div className="mb-4 flex flex-wrap items-start justify-between gap-3">
          <div className="flex flex-col gap-1">
            {title ? (
              <h2 id={headingId} className="text-lg font-bold">
                {title}
              </h2>
            ) : null}
            {description ? <p className="text-sm text-ink-300">{description}</p> : null}
          </div>
          {actions ? <div className="flex items-center gap-2">{actions}</div> : null}
        </div>
      ) : null}
      {children}
    </section>
  );
}
