import { formatFixed } from "../../lib/format.ts";

// What every uPlot chart in the console shares: the "Ink & Iris" axis look, the series palette, the
// y range and the tick labels. Pure functions, so the unit tests read them without a canvas.

/** Axis strokes and grid from the "Ink & Iris" tokens (ink-300 text, ink-700 grid; styles/index.css). */
export const AXIS_STYLE = {
  stroke: "#a9b1c2",
  grid: { stroke: "#283040", width: 1 },
  ticks: { stroke: "#283040", width: 1 },
  font: "11px 'JetBrains Mono', monospace",
};
export const AXIS_LABEL_FONT = "11px 'Atkinson Hyperlegible Next', sans-serif";

export interface SeriesStyle {
  stroke: string;
  dash?: number[];
}

/**
 * Series colours for charts with several lines of the same kind (one per joint, one per version):
 * the Okabe–Ito palette (Okabe & Ito 2008, "Color Universal Design", https://jfly.uni-koeln.de/color/),
 * chosen because its colours stay apart for the common forms of colour blindness. Its black is left out
 * (invisible on the ink background) and its blue comes last (the darkest on ink). A dash pattern repeats
 * the distinction for the second half, so no line depends on colour alone. The state colours (ok, warn,
 * stop) keep their meaning: in the charts they mark thresholds (ε, σ_stop), never a joint.
 */
export const SERIES_PALETTE: readonly SeriesStyle[] = [
  { stroke: "#56B4E9" }, // sky blue
  { stroke: "#E69F00" }, // orange
  { stroke: "#009E73" }, // bluish green
  { stroke: "#CC79A7", dash: [6, 3] }, // reddish purple
  { stroke: "#F0E442", dash: [6, 3] }, // yellow
  { stroke: "#D55E00", dash: [6, 3] }, // vermillion
  { stroke: "#0072B2", dash: [2, 3] }, // blue
];

/** The style of series `index` (joint index, version index); past the palette it repeats with a dotted line. */
export function seriesStyle(index: number): SeriesStyle {
  const base = SERIES_PALETTE[index % SERIES_PALETTE.length]!;
  return index < SERIES_PALETTE.length ? base : { stroke: base.stroke, dash: [2, 2] };
}

/** Threshold lines (the σ chart's ε and σ_stop): the state colours of the singularity indicator. */
export const THRESHOLD_STYLES = {
  epsilon: { stroke: "#f2b84b", dash: [4, 4] }, // warn-400: the damped region begins
  sigmaStop: { stroke: "#ff6e6e", dash: [4, 4] }, // stop-400: the guard stops
} satisfies Record<string, SeriesStyle>;

/** A 1, 2, 2.5 or 5 × 10ⁿ step at or above `rough` (common practice for axis steps, no source). */
export function niceStep(rough: number): number {
  if (!(rough > 0) || !Number.isFinite(rough)) return 1;
  const power = 10 ** Math.floor(Math.log10(rough));
  for (const m of [1, 2, 2.5, 5, 10]) if (m * power >= rough * (1 - 1e-9)) return m * power;
  return 10 * power;
}

/**
 * The y range of a chart from its data's min and max: zero always inside (rates and speeds are read
 * against zero), at least `minSpan` wide, so a still arm (all zeros, or round-off like 1e-17) shows an
 * axis of sensible, distinct ticks instead of "0 0 0", and widened outward to whole steps of about a
 * quarter of the span. `min`/`max` are null or NaN without data.
 */
export function chartYRange(min: number | null, max: number | null, minSpan: number): [number, number] {
  let lo = min !== null && Number.isFinite(min) ? Math.min(0, min) : 0;
  let hi = max !== null && Number.isFinite(max) ? Math.max(0, max) : 0;
  if (hi - lo < minSpan) {
    // A magnitude (nothing below zero) grows upward, a negative-only one downward, anything else both ways.
    if (lo === 0) hi = minSpan;
    else if (hi === 0) lo = -minSpan;
    else {
      const grow = (minSpan - (hi - lo)) / 2;
      lo -= grow;
      hi += grow;
    }
  }
  const step = niceStep((hi - lo) / 4);
  // `|| 0` turns Math.ceil's −0 into 0.
  return [Math.floor(lo / step + 1e-9) * step || 0, Math.ceil(hi / step - 1e-9) * step || 0];
}

/** As chartYRange, for a signed quantity (joint rates): an idle chart is symmetric about zero. */
export function signedChartYRange(min: number | null, max: number | null, minSpan: number): [number, number] {
  const hasData = min !== null && max !== null && Number.isFinite(min) && Number.isFinite(max);
  if (!hasData || Math.max(Math.abs(min), Math.abs(max)) < minSpan / 2) return chartYRange(-minSpan / 2, minSpan / 2, minSpan);
  return chartYRange(min, max, minSpan);
}

/**
 * The y ticks of a range made by chartYRange: every whole step of about a quarter of the span, so 3 to 5
 * ticks whatever the chart's height (uPlot's own choice by pixel spacing left a 100 px tall plot with two).
 */
export function chartTicks(lo: number, hi: number): number[] {
  if (!(hi > lo)) return [lo];
  const step = niceStep((hi - lo) / 4);
  const ticks: number[] = [];
  for (let k = Math.ceil(lo / step - 1e-9); k * step <= hi + step * 1e-9; k++) ticks.push(k * step || 0);
  return ticks;
}

/**
 * Tick labels for ticks `increment` apart: as many decimals as the step needs (0.5 → 1, 0.25 → 2), at
 * most 3, and "0" for zero however it was reached (round-off can give -1e-17).
 */
export function tickLabels(ticks: readonly number[], increment: number): string[] {
  const decimals = increment > 0 && Number.isFinite(increment) ? Math.min(3, Math.max(0, Math.ceil(-Math.log10(increment) - 1e-9) + (hasQuarter(increment) ? 1 : 0))) : 0;
  return ticks.map((v) => (Math.abs(v) < increment * 1e-6 ? "0" : formatFixed(v, decimals)));
}

/** True for a 2.5 × 10ⁿ step, whose labels need one more decimal than the power of ten says (0.25). */
function hasQuarter(increment: number): boolean {
  const mantissa = increment / 10 ** Math.floor(Math.log10(increment));
  return Math.abs(mantissa - 2.5) < 1e-9;
}
