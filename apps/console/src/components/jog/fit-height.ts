import { useLayoutEffect, type RefObject } from "react";

/**
 * The height that makes an element reach the bottom of the viewport: what is left below its top, less a
 * bottom margin, within [minPx, maxPx]. Pure, for the tests.
 */
export function fitHeightPx(viewportPx: number, topPx: number, bottomMarginPx: number, minPx: number, maxPx: number): number {
  return Math.round(Math.min(maxPx, Math.max(minPx, viewportPx - topPx - bottomMarginPx)));
}

/** Tailwind's xl breakpoint (80rem): below it the workspace stacks and keeps its natural height. */
const WIDE_QUERY = "(min-width: 80rem)";

/**
 * Gives the element a min-height that ends it at the bottom of the first screen, so the drive workspace
 * (view, STOP, enabling, jog controls, singularity, one chart) fills one screen without scrolling and the
 * 3D view takes what the fixed parts leave. Re-measured when the page above it changes size (a message
 * appears) or the window does; set on the element directly, no React render.
 */
export function useFitToViewport(ref: RefObject<HTMLElement | null>, options: { minPx: number; maxPx: number; bottomMarginPx: number }): void {
  const { minPx, maxPx, bottomMarginPx } = options;
  useLayoutEffect(() => {
    const element = ref.current;
    if (!element) return;
    const wide = window.matchMedia(WIDE_QUERY);
    const apply = () => {
      if (!wide.matches) {
        element.style.minHeight = "";
        return;
      }
      const top = element.getBoundingClientRect().top + window.scrollY;
      const height = `${fitHeightPx(window.innerHeight, top, bottomMarginPx, minPx, maxPx)}px`;
      if (element.style.minHeight !== height) element.style.minHeight = height;
    };
    apply();
    const observer = new ResizeObserver(apply);
    observer.observe(document.body);
    window.addEventListener("resize", apply);
    wide.addEventListener("change", apply);
    return () => {
      observer.disconnect();
      window.removeEventListener("resize", apply);
      wide.removeEventListener("change", apply);
    };
  }, [ref, minPx, maxPx, bottomMarginPx]);
}
