import type { ProfileParams } from "@jogwright/shared";
import type { ChartColumns, ChartData } from "../../lib/frame-trace.ts";

// What the live charts draw besides the trace: the σ chart's threshold lines. Pure, for the unit tests
// (live-charts.tsx needs a canvas).

export type ChartKey = keyof ChartData;

/** The σ chart's threshold lines, mm; null where the profile has none (no ε outside the σ schedule). */
export interface SigmaLines {
  epsilonMm: number | null;
  sigmaStopMm: number | null;
}

/**
 * ε of the singular-value schedule (the damped region), and σ_stop of the stop-before guard: the same two
 * thresholds the singularity indicator marks.
 */
export function sigmaLinesOf(params: ProfileParams | null): SigmaLines {
  return {
    epsilonMm: params?.damping.kind === "singular-value" ? params.damping.epsilonM * 1000 : null,
    sigmaStopMm: params?.guard.policy === "stop-before" ? params.guard.sigmaStopM * 1000 : null,
  };
}

/** The columns a chart draws: the trace's, plus one constant column per threshold line. */
export function chartColumns(key: ChartKey, data: ChartData, lines: SigmaLines): ChartColumns {
  const columns = data[key];
  if (key !== "sigma") return columns;
  const n = columns[0].length;
  const extra = [lines.epsilonMm, lines.sigmaStopMm].filter((v): v is number => v !== null).map((v) => new Float64Array(n).fill(v));
  return [...columns, ...extra] as ChartColumns;
}
