import type { ArmModel } from "@jogwright/kinematics";
import type { ProfileParams, TrialDefinition } from "@jogwright/shared";
import { compileTrial } from "./compile.ts";
import { computeTrialMetrics, type TrialMetrics } from "./metrics.ts";
import { copySeries, recordTrial, type CompiledTrial, type TrialSeries } from "./runner.ts";
import { wristJointIndex } from "./builtin.ts";
import { recordReplay, type ReplayInput } from "./replay.ts";
import { encodeSeries, seriesHash } from "./series-codec.ts";

/**
 * One offline run, as the worker pool executes it (trial-pool.ts): compile the trial (mathjs sampling,
 * cached per worker: a sweep runs the same trials many times), run it through the live jog path, compute
 * its metrics, and hand back the series as the caller asks. Pure and deterministic; also called directly by
 * tests and benchmarks.
 */
interface RunJobCommon {
  arm: ArmModel;
  params: ProfileParams;
  /**
   * What comes back besides the metrics: "series" (the default), the series in arrays of its own;
   * "stored", the series encoded for storage and its hash (series-codec.ts), made here so that the
   * compression (~35 ms for a 10-s trial at 1 kHz) runs in the pool's thread, not on the server's main
   * thread, and only the compressed bytes (~1.6 MB instead of 3.9 MB) cross between threads; "metrics",
   * nothing else (a sweep keeps no series).
   */
  output?: "series" | "stored" | "metrics";
}

/** A run's series as `trial_runs` stores it: encodeSeries' bytes and seriesHash. */
export interface StoredSeries {
  bytes: Uint8Array;
  hash: string;
}

/** A scripted trial, or a recorded session's input replayed (replay.ts). */
export type RunJob = RunJobCommon & ({ trial: TrialDefinition; replay?: undefined } | { replay: { input: ReplayInput; readyPose: readonly number[] }; trial?: undefined });

export interface RunJobResult {
  metrics: TrialMetrics;
  /** With output "series". */
  series: TrialSeries | null;
  /** With output "stored". */
  stored: StoredSeries | null;
  /** Wall time of the simulation and the metrics [ms], before the series is copied or encoded (not part of the result's hash). */
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
  const recorder = job.replay ? recordReplay(job.arm, job.replay.readyPose, job.params, job.replay.input) : recordTrial(job.arm, job.params, compiled(job));
  const d = job.params.damping;
  const output = job.output ?? "series";
  // The metrics and the output are made from the recorder's scratch itself (views, no copy).
  return recorder.use((series) => {
    const metrics = computeTrialMetrics(series, {
      jointCaps: effectiveJointCaps(job.arm, job.params),
      epsilonM: d.kind === "singular-value" ? d.epsilonM : null,
      wristJoint: wristJointIndex(job.arm),
    });
    const elapsedMs = performance.now() - started;
    return {
      metrics, elapsedMs,
      series: output === "series" ? copySeries(series) : null,
      stored: output === "stored" ? { bytes: encodeSeries(series), hash: seriesHash(series) } : null,
    };
  });
}

export default runJob;
