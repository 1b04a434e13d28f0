import { useEffect, useRef, type ReactNode } from "react";
import { cn } from "../../lib/cn.ts";

/**
 * The bottom of a long form: its actions (Save …) and what became of the last one ("Saved as v4", "Not
 * saved: a newer version exists"), kept in view at the bottom of the window while the form scrolls
 * (issue 13, item 10: the feedback once appeared 2,500 px above the Save button, out of sight).
 *
 * When `feedbackKey` changes to a new non-null value, focus moves to the feedback, so a screen reader
 * reads it and the keyboard continues from it; its buttons (Submit, Compare, Load …) come next in the tab
 * order. Give each outcome its own key (e.g. `saved-${id}`, `conflict-${n}`), null while there is none.
 */
/**
 * For the form a FormFooter ends: a field scrolled into view (by focus, Tab or an error) stops above the
 * footer instead of behind it (`scroll-margin-bottom`, 112 px: the footer with its buttons and a short
 * message).
 */
export const SCROLL_ABOVE_FORM_FOOTER = "[&_input]:scroll-mb-28 [&_select]:scroll-mb-28 [&_textarea]:scroll-mb-28 [&_fieldset]:scroll-mb-28";

export function FormFooter({
  feedback,
  feedbackKey,
  children,
  className,
}: {
  feedback?: ReactNode;
  feedbackKey: string | null;
  /** The actions, right-aligned. */
  children: ReactNode;
  className?: string;
}) {
  const feedbackRef = useRef<HTMLDivElement>(null);
  useEffect(() => {
    // Moving focus is a side effect on the DOM the key names: after the feedback rendered.
    if (feedbackKey !== null) feedbackRef.current?.focus({ preventScroll: false });
  }, [feedbackKey]);
  return (
    <div
      data-testid="form-footer"
      className={cn(
        "sticky bottom-0 z-10 -mx-5 -mb-5 flex flex-col gap-3 rounded-b-lg border-t border-ink-700 bg-ink-900/95 px-5 py-3 backdrop-blur-sm",
        className,
      )}
    >
      {feedback ? (
        <div ref={feedbackRef} tabIndex={-1} data-testid="form-feedback" className="max-h-[40vh] overflow-y-auto rounded-md">
          {feedback}
        </div>
      ) : null}
      <div className="flex flex-wrap items-center justify-end gap-3">{children}</div>
    </div>
  );
}
