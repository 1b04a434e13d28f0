import { DEG_PER_RAD, type TrialMetrics } from "@jogwright/shared";

// The tuning bench's metrics in display units, shared by the bench, the review's evidence and the report.

/** Millimetres per metre, and degrees per radian (shared): the bench shows lengths in mm, angles in deg. */
export const MM = 1000;
export const DEG = DEG_PER_RAD;

/** The wrist joints of an n-joint arm (the last three), 0-based. */
export const wristOf = (n: number) => (n >= 6 ? [n - 3, n - 2, n - 1] : Array.from({ length: n }, (_, i) => i));
const maxOver = (values: number[], idx: number[]) => Math.max(...idx.map((i) => values[i] ?? 0));

export interface MetricRow {
  id: string;
  label: string;
  unit: string;
  digits: number;
  /** "lower": smaller is better; "higher": larger is better; null: no direction (shown, not judged). */
  better: "lower" | "higher" | null;
  value: (m: TrialMetrics) => number;
}

/** The metrics a comparison shows, in display units (METHODS.md defines each). */
export const METRIC_ROWS: MetricRow[] = [
  { id: "finished", label: "Finished (1) or stalled (0)", unit: "", digits: 0, better: "higher", value: (m) => (m.finished ? 1 : 0) },
  { id: "maxDev", label: "Max path deviation", unit: "mm", digits: 2, better: "lower", value: (m) => m.path.maxDeviationM * MM },
  { id: "rmsDev", label: "RMS path deviation", unit: "mm", digits: 2, better: "lower", value: (m) => m.path.rmsDeviationM * MM },
  { id: "lag", label: "Lag at the release", unit: "mm", digits: 2, better: "lower", value: (m) => m.path.lagM * MM },
  { id: "orient", label: "Max orientation error", unit: "deg", digits: 2, better: "lower", value: (m) => m.path.maxOrientationErrorRad * DEG },
  { id: "residual", label: "Max residual ‖v − J q̇‖", unit: "mm/s", digits: 2, better: "lower", value: (m) => m.path.maxResidualLinearMPerS * MM },
  {
    id: "wristRate", label: "Peak wrist rate, of cap", unit: "%", digits: 1, better: "lower",
    value: (m) => maxOver(m.joints.peakRateFraction, wristOf(m.joints.peakRateFraction.length)) * 100,
  },
  {
    id: "wristAccel", label: "Peak wrist acceleration", unit: "deg/s²", digits: 0, better: "lower",
    value: (m) => maxOver(m.joints.peakAccelRadPerS2, wristOf(m.joints.peakAccelRadPerS2.length)) * DEG,
  },
  {
    id: "wristJerk", label: "Peak wrist jerk", unit: "deg/s³", digits: 0, better: "lower",
    value: (m) => maxOver(m.joints.peakJerkRadPerS3, wristOf(m.joints.peakJerkRadPerS3.length)) * DEG,
  },
  { id: "capBound", label: "Time cap-bound", unit: "s", digits: 3, better: "lower", value: (m) => m.joints.capBoundS },
  { id: "sigma", label: "Smallest σ_min", unit: "mm", digits: 2, better: "higher", value: (m) => m.singularity.minSigma * MM },
  { id: "belowEps", label: "Time inside ε", unit: "s", digits: 3, better: null, value: (m) => m.singularity.timeBelowEpsilonS ?? 0 },
  { id: "lambda", label: "Largest λ", unit: "mm", digits: 2, better: null, value: (m) => m.singularity.maxLambdaM * MM },
  {
    id: "branch", label: "Wrist passed through alignment (1) or kept its branch (0)", unit: "", digits: 0, better: null,
    value: (m) => (m.singularity.wristBranch?.crossedZero ? 1 : 0),
  },
  {
    id: "branchEnd", label: "Wrist's middle joint at the end", unit: "deg", digits: 1, better: null,
    value: (m) => (m.singularity.wristBranch?.endRad ?? 0) * DEG,
  },
  { id: "guard", label: "Guard stops", unit: "", digits: 0, better: "lower", value: (m) => m.singularity.guardStops },
  { id: "stopWorst", label: "Worst predicted stop", unit: "mm", digits: 1, better: "lower", value: (m) => m.stopping.worstPredictedDistanceM * MM },
  { id: "stopFinal", label: "Final stop distance", unit: "mm", digits: 1, better: "lower", value: (m) => m.stopping.finalStopDistanceM * MM },
];

/** Relative differences below this count as the same (rounding of a deterministic run is far smaller). */
export const SAME_WITHIN = 0.01;

export function verdict(row: MetricRow, a: number, b: number): "better" | "worse" | "same" | null {
  if (row.better === null) return null;
  const scale = Math.max(Math.abs(a), Math.abs(b), 1e-12);
  if (Math.abs(b - a) / scale < SAME_WITHIN) return "same";
  const bIsLower = b < a;
  return (row.better === "lower") === bIsLower ? "better" : "worse";
}

