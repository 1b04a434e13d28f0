import { setMaxListeners } from "node:events";
import type { ArmModel } from "@jogwright/kinematics";
import {
  profileParamsSchema, withSweepParameter, type ProfileParams, type SweepAxis, type SweepObjective, type TrialDefinition,
} from "@jogwright/shared";
import type { TrialMetrics } from "./metrics.ts";
import { paretoFront } from "./pareto.ts";
import type { RunJob, RunJobResult } from "./run-job.ts";

/**
 * A sweep (issue 10): one or two profile parameters over ranges, every combination run on every chosen
 * trial in the worker pool; each point judged by the worst of its trials on two objectives, and the Pareto
 * front of those marked. Invalid combinations (a value the profile schema refuses, e.g. σ_stop above ε
 * where that is a rule) are reported with the schema's sentence and not run.
 */

export interface SweepPoint {
  /** The parameter values, one per axis. */
  values: number[];
  /** The schema's sentence when this combination is not a valid profile; then nothing ran. */
  invalid: string | null;
  objectives: Record<SweepObjective, number> | null;
  finishedTrials: number;
  trials: number;
}

export interface SweepResult {
  axes: SweepAxis[];
  x: SweepObjective;
  y: SweepObjective;
  points: SweepPoint[];
  /** Indices into points of the Pareto front (x and y both minimised), by x. */
  front: number[];
}

export interface SweepInput {
  arm: ArmModel;
  base: ProfileParams;
  axes: SweepAxis[];
  trials: TrialDefinition[];
  x: SweepObjective;
  y: SweepObjective;
}

export type RunFn = (job: RunJob, signal?: AbortSignal) => Promise<RunJobResult>;

export function axisValues(axis: SweepAxis): number[] {
  return Array.from({ length: axis.steps }, (_, i) => axis.from + ((axis.to - axis.from) * i) / (axis.steps - 1));
}

/** A copy of params with one parameter set (shared: the console makes a draft from a picked point the same way). */
export const withParameter = withSweepParameter;

export function objectivesOf(results: TrialMetrics[], arm: ArmModel): Record<SweepObjective, number> {
  const n = arm.joints.length;
  const wrist = n >= 6 ? [n - 3, n - 2, n - 1] : Array.from({ length: n }, (_, i) => i);
  const worst = (f: (m: TrialMetrics) => number) => results.reduce((w, m) => Math.max(w, f(m)), 0);
  return {
    maxDeviationM: worst((m) => m.path.maxDeviationM),
    rmsDeviationM: worst((m) => m.path.rmsDeviationM),
    lagM: worst((m) => m.path.lagM),
    peakWristAccelRadPerS2: worst((m) => Math.max(...wrist.map((i) => m.joints.peakAccelRadPerS2[i]!))),
    peakJointRateFraction: worst((m) => Math.max(...m.joints.peakRateFraction)),
    worstStopDistanceM: worst((m) => m.stopping.worstPredictedDistanceM),
    timeBelowEpsilonS: worst((m) => m.singularity.timeBelowEpsilonS ?? 0),
  };
}

export async function runSweep(
  input: SweepInput, run: RunFn, onProgress: (done: number, total: number) => void, signal?: AbortSignal,
): Promise<SweepResult> {
  const grids = input.axes.map(axisValues);
  const combos: number[][] = grids.length === 1 ? grids[0]!.map((v) => [v]) : grids[0]!.flatMap((a) => grids[1]!.map((b) => [a, b]));
  const points: SweepPoint[] = [];
  const jobs: { point: number; job: RunJob }[] = [];
  for (const values of combos) {
    let params = input.base;
    let invalid: string | null = null;
    try {
      values.forEach((v, i) => (params = withParameter(params, input.axes[i]!.parameter, v)));
      const parsed = profileParamsSchema.safeParse(params);
      if (!parsed.success) invalid = parsed.error.issues[0]?.message ?? "not a valid profile";
      else params = parsed.data;
    } catch (e) {
      invalid = (e as Error).message;
    }
    points.push({ values, invalid, objectives: null, finishedTrials: 0, trials: input.trials.length });
    if (invalid) continue;
    for (const trial of input.trials) jobs.push({ point: points.length - 1, job: { arm: input.arm, params, trial, output: "metrics" } });
  }
  const total = jobs.length;
  let done = 0;
  shareSignal(signal, total);
  onProgress(0, total);
  const metrics: TrialMetrics[][] = points.map(() => []);
  await Promise.all(
    jobs.map(async ({ point, job }) => {
      const r = await run(job, signal);
      metrics[point]!.push(r.metrics);
      done++;
      onProgress(done, total);
    }),
  );
  points.forEach((p, i) => {
    if (p.invalid) return;
    p.objectives = objectivesOf(metrics[i]!, input.arm);
    p.finishedTrials = metrics[i]!.filter((m) => m.finished).length;
  });
  const front = paretoFront(points.map((p) => (p.objectives ? { x: p.objectives[input.x], y: p.objectives[input.y] } : { x: Number.NaN, y: Number.NaN })));
  return { axes: input.axes, x: input.x, y: input.y, points, front };
}

/**
 * Lets `jobs` runs wait on one cancel signal at the same time. Each queued run listens on it for an abort
 * (the pool's task does), so a sweep's hundreds of runs would pass Node's default of 10 listeners and log a
 * MaxListenersExceededWarning for what is no leak: every run drops its listener when it ends.
 */
export function shareSignal(signal: AbortSignal | undefined, jobs: number): void {
  if (signal) setMaxListeners(Math.max(10, jobs + 10), signal);
}
