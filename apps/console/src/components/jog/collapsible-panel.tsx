import { useId, useState, type ReactNode } from "react";
import { ChevronDown, ChevronUp } from "lucide-react";

const STORAGE_PREFIX = "jogwright.drive.collapsed.";

function readCollapsed(id: string): boolean {
  try {
    return localStorage.getItem(STORAGE_PREFIX + id) === "1";
  } catch {
    return false;
  }
}

/**
 * A panel of the drive workspace that folds to its title bar (remembered in this browser, per panel; `isChart`
 * keeps a chart's title in the case it is written in). Open,
 * it shows `children` as they are (a status panel or a chart, which bring their own frame and heading)
 * with a "Collapse" button in the top-right corner; folded, only the title and "Expand", and the content is
 * not mounted (a folded chart costs no redraws). The buttons are named "Collapse"/"Expand" and described
 * by the title, so no other control's name ("STOP") is ever a substring of theirs.
 */
export function CollapsiblePanel({ id, title, isChart = false, children }: { id: string; title: string; isChart?: boolean; children: ReactNode }) {
  const [isCollapsed, setCollapsed] = useState(() => readCollapsed(id));
  const titleId = useId();
  const contentId = useId();

  function toggle() {
    const next = !isCollapsed;
    setCollapsed(next);
    try {
      localStorage.setItem(STORAGE_PREFIX + id, next ? "1" : "0");
    } catch {
      // Storage can be unavailable (private mode): the panel then opens again on the next visit.
    }
  }

  const button = (
    <button
      type="button"
      onClick={toggle}
      aria-expanded={!isCollapsed}
      aria-controls={contentId}
      aria-describedby={titleId}
      className="inline-flex items-center gap-1 rounded-sm px-1.5 py-0.5 text-xs font-semibold text-ink-400 hover:bg-ink-800 hover:text-ink-100"
    >
      {isCollapsed ? "Expand" : "Collapse"}
      {isCollapsed ? <ChevronDown aria-hidden className="size-3.5" /> : <ChevronUp aria-hidden className="size-3.5" />}
    </button>
  );
  return (
    <div className="relative min-w-0" data-testid={`panel-${id}`} data-collapsed={isCollapsed ? "true" : "false"}>
      <span id={titleId} className="sr-only">
        {title}
      </span>
      {isCollapsed ? (
        <div id={contentId} className="flex items-center justify-between gap-2 rounded-lg border border-ink-700 bg-ink-850 px-3 py-2">
          {/* A chart's title as its caption reads (no capitals: "σ_min" must not turn into "Σ_MIN"). */}
          <span aria-hidden className={isChart ? "text-sm font-semibold text-ink-100" : "text-xs font-semibold tracking-wide text-ink-300 uppercase"}>
            {title}
          </span>
          {button}
        </div>
      ) : (
        <>
          <div id={contentId}>{children}</div>
          <div className="absolute top-2 right-2">{button}</div>
        </>
      )}
    </div>
  );
}
