import type { ArmModel } from "@jogwright/kinematics";
import type { ProfileParams, TrialDefinition } from "@jogwright/shared";
import { compileTrial } from "./compile.ts";
import { computeTrialMetrics, type TrialMetrics } from "./metrics.ts";
import { runTrial, type CompiledTrial, type TrialSeries } from "./runner.ts";
import { wristJointIndex } from "./builtin.ts";
import { replayInputs, type ReplayInput } from "./replay.ts";

/**
 * One offline run, as the worker pool executes it (trial-pool.ts): compile the trial (mathjs sampling,
 * cached per worker: a sweep runs the same trials many times), run it through the live jog path, compute
 * its metrics. Pure and deterministic; also called directly by tests and benchmarks.
 */
interface RunJobCommon {
  arm: ArmModel;
  params: ProfileParams;
  /** false: return the metrics only (a sweep keeps no series; saves copying them between threads). */
  withSeries?: boolean;
}

/** A scripted trial, or a recorded session's input replayed (replay.ts). */
export type RunJob = RunJobCommon & ({ trial: TrialDefinition; replay?: undefined } | { replay: { input: ReplayInput; readyPose: readonly number[] }; trial?: undefined });

export interface RunJobResult {
  metrics: TrialMetrics;
  series: TrialSeries | null;
  /** Wall time of the simulation and the metrics [ms] (not part of the result's hash). */
  elapsedMs: number;
}

const cache = new Map<string, CompiledTrial>();
const CACHE_SIZE = 32;

function compiled(job: RunJobCommon & { trial: TrialDefinition }): CompiledTrial {
  const key = `${job.params.tickRateHz}|${JSON.stringify(job.arm)}|${JSON.stringify(job.trial)}`;
  let c = cache.get(key);
  if (!c) {
    c = compileTrial(job.trial, job.arm, job.params.tickRateHz);
    if (cache.size >= CACHE_SIZE) cache.delete(cache.keys().next().value!);
    cache.set(key, c);
  }
  return c;
}

/** The effective joint caps of a run: the profile's cap and the arm's rated speed, the smaller. */
export function effectiveJointCaps(arm: ArmModel, params: ProfileParams): number[] {
  return arm.joints.map((j, i) => Math.min(params.jointRateCapsRadPerS[i] ?? Infinity, j.maxSpeed ?? Infinity));
}

export function runJob(job: RunJob): RunJobResult {
  const started = performance.now();
  const series = job.replay ? replayInputs(job.arm, job.replay.readyPose, job.params, job.replay.input) : runTrial(job.arm, job.params, compiled(job));
  const d = job.params.damping;
  const metrics = computeTrialMetrics(series, {
    jointCaps: effectiveJointCaps(job.arm, job.params),
    epsilonM: d.kind === "singular-value" ? d.epsilonM : null,
    wristJoint: wristJointIndex(job.arm),
  });
  return { metrics, series: job.withSeries === false ? null : series, elapsedMs: performance.now() - started };
}

export default runJob;
