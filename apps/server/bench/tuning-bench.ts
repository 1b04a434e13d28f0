/**
 * Tuning-bench benchmark (issue 10). Prints medians over repetitions and the ratio to each goal:
 * - a 10-second trial at 1 kHz through the live jog path, metrics included (goal ≤ 20 ms), in a warm
 *   trial-pool thread, one run at a time;
 * - a 100-point sweep (λmax × ε, 10 × 10) over 6 built-in trials of the six-axis demo arm in the worker
 *   pool sized to the cores (goal ≤ 5 s on the 2-core machine), the pool warm;
 * - a singularity map of 200 × 200 points over (q4, q5) and over a Cartesian plane (goal ≤ 1 s each).
 * No database. Figures depend on the machine's load: check `uptime` first.
 *   pnpm --filter @jogwright/server exec tsx bench/tuning-bench.ts      (or `pnpm bench` for everything)
 */
import { findDemoArm } from "@jogwright/kinematics";
import { defaultProfileParams, type TrialDefinition } from "@jogwright/shared";
import { builtinTrials } from "../src/modules/trials/builtin.ts";
import { cartesianMap, jointMap } from "../src/modules/trials/singularity-map.ts";
import { runSweep } from "../src/modules/trials/sweep.ts";
import { closeTrialPool, runInPool, trialPoolSize } from "../src/modules/trials/trial-pool.ts";

const arm = findDemoArm("cell-arm-6")!;
const base = defaultProfileParams(arm.model.joints.map((j) => j.maxSpeed!));
base.guard = { policy: "damp-through", sigmaStopM: 0.02 };

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)]!;
}
function report(what: string, times: number[], goalMs: number): void {
  const m = median(times);
  console.log(`${what}: median ${m.toFixed(1)} ms over ${times.length} (min ${Math.min(...times).toFixed(1)}, max ${Math.max(...times).toFixed(1)}); goal ${goalMs} ms, ratio ${(m / goalMs).toFixed(2)}`);
}

// 1. A 10-second trial at 1 kHz, metrics included, where the product runs it: in a trial-pool thread, one
// run at a time, its series encoded for storage there (output "stored", as the server asks). A pool thread
// runs trial after trial (a sweep: hundreds) and V8 reaches its steady code only after ~20 runs of a trial
// (measured: ~200 ms for the first, which also compiles the trial, then 20–40 ms, then steady), so 30 runs
// warm it first; they are printed too, so the warm-up is not hidden. The time is the thread's own
// (RunJobResult.elapsedMs: simulation and metrics); the round trip adds encoding the series (zlib, hash)
// and handing the bytes back to this thread, and is printed beside it.
const tenSeconds: TrialDefinition = {
  name: "ten seconds", description: "", startPose: arm.readyPose,
  segments: [{ kind: "twist", frame: "world", linearMPerS: [0.02, 0.01, 0], angularRadPerS: [0, 0, 0.05], durationS: 10 }],
};
const at1kHz = { ...base, tickRateHz: 1000 };
const timeRun = async (output: "stored" | "series"): Promise<[number, number]> => {
  const t0 = performance.now();
  const result = await runInPool({ arm: arm.model, params: at1kHz, trial: tenSeconds, output });
  return [result.elapsedMs, performance.now() - t0];
};
const warmUp: number[] = [];
for (let i = 0; i < 30; i++) warmUp.push((await timeRun("stored"))[0]);
console.log(`10-s trial in a fresh pool thread: first ${warmUp[0]!.toFixed(0)} ms, runs 2–30 median ${median(warmUp.slice(1)).toFixed(1)} ms`);
const inThread: number[] = [];
const roundTrip: number[] = [];
const roundTripSeries: number[] = [];
for (let i = 0; i < 30; i++) {
  const [own, total] = await timeRun("stored");
  inThread.push(own);
  roundTrip.push(total);
  roundTripSeries.push((await timeRun("series"))[1]);
}
report("10-s trial at 1 kHz with metrics (a warm pool thread)", inThread, 20);
console.log(`  the same from request to result, the series encoded for storage in the thread (as the server runs it): median ${median(roundTrip).toFixed(1)} ms`);
console.log(`  the same from request to result, the series itself handed back (copied): median ${median(roundTripSeries).toFixed(1)} ms`);

// 2. Singularity maps, 200 × 200.
for (const [what, make] of [
  ["singularity map 200 × 200 over (q4, q5)", () => jointMap(arm.model, { measure: "sigma-min", pose: arm.readyPose, xJoint: 3, yJoint: 4, resolution: 200 })],
  ["singularity map 200 × 200 over a Cartesian plane (xz, ±0.4 m)", () => cartesianMap(arm.model, { measure: "sigma-min", pose: arm.readyPose, plane: "xz", halfWidthM: 0.4, resolution: 200 })],
] as const) {
  make();
  const times: number[] = [];
  for (let i = 0; i < 5; i++) {
    const t0 = performance.now();
    make();
    times.push(performance.now() - t0);
  }
  report(what, times, 1000);
}

// 3. A 100-point sweep over 6 trials in the pool.
const trials = builtinTrials(arm).trials.slice(0, 6).map((t) => t.definition);
const axes = [
  { parameter: "damping.lambdaMaxM" as const, from: 0, to: 0.08, steps: 10 },
  { parameter: "damping.epsilonM" as const, from: 0.02, to: 0.08, steps: 10 },
];
// Warm the pool: every thread loads its modules and JIT-compiles the step once.
await Promise.all(Array.from({ length: trialPoolSize() * 2 }, () => runInPool({ arm: arm.model, params: base, trial: trials[0]!, output: "metrics" })));
const sweepTimes: number[] = [];
for (let i = 0; i < 3; i++) {
  const t0 = performance.now();
  const r = await runSweep({ arm: arm.model, base, axes, trials, x: "peakWristAccelRadPerS2", y: "maxDeviationM" }, runInPool, () => {});
  sweepTimes.push(performance.now() - t0);
  if (i === 0) console.log(`sweep: ${r.points.length} points × ${trials.length} trials, ${r.front.length} on the Pareto front, pool of ${trialPoolSize()} threads`);
}
report("100-point sweep over 6 trials (worker pool)", sweepTimes, 5000);
await closeTrialPool();
