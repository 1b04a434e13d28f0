import { useState } from "react";
import { ChevronDown, ChevronUp, TriangleExclamationPoint } from "lucide-react";

const STORAGE_KEY = "jogwright.cautions.collapsed";

/** The full caution of PRODUCT.md ("Cautions the product shows"). */
export const CAUTION_TEXT =
  "Simulation only — Jogwright never commands real hardware. A locked profile here is not a safety sign-off: real arms need the site's risk assessment, safety-rated stops and enabling devices, the applicable standards (ISO 10218-1/-2:2025, IEC 60204-1, ISO 13850:2015) and local regulations; qualified people decide. The on-screen and gamepad STOP is not an emergency-stop device in the sense of ISO 13850: a browser and a network path are never part of a safety function.";
const SHORT_TEXT = "Simulation only — not a safety sign-off for real arms.";

function readCollapsed(): boolean {
  try {
    return localStorage.getItem(STORAGE_KEY) === "1";
  } catch {
    return false;
  }
}

/**
 * Always on screen. It can be folded to one line (remembered in this browser) but never hidden; the full
 * text stays in the accessible description either way.
 */
export function CautionsBanner() {
  const [isCollapsed, setCollapsed] = useState(readCollapsed);

  function toggle() {
    const next = !isCollapsed;
    setCollapsed(next);
    try {
      localStorage.setItem(STORAGE_KEY, next ? "1" : "0");
    } catch {
      // Storage can be unavailable (private mode); the banner then just starts expanded next time.
    }
  }

  return (
    <section
      aria-label="Cautions"
      data-print="hide"
      className="flex items-start gap-3 border-b border-warn-400/40 bg-warn-950 px-4 py-2 text-sm text-ink-100"
    >
      <TriangleExclamationPoint aria-hidden className="mt-0.5 size-4 shrink-0 text-warn-400" />
      <p className={isCollapsed ? "min-w-0 flex-1 truncate" : "min-w-0 flex-1"} title={isCollapsed ? CAUTION_TEXT : undefined}>
        {isCollapsed ? SHORT_TEXT : CAUTION_TEXT}
      </p>
      <button
        type="button"
        onClick={toggle}
        aria-expanded={!isCollapsed}
        className="inline-flex shrink-0 items-center gap-1 rounded-sm px-1.5 text-xs font-semibold text-warn-400 hover:bg-warn-400/10"
      >
        {isCollapsed ? (
          <>
            Show full caution <ChevronDown aria-hidden className="size-3.5" />
          </>
        ) : (
          <>
            Shorten <ChevronUp aria-hidden className="size-3.5" />
          </>
        )}
      </button>
    </section>
  );
}
