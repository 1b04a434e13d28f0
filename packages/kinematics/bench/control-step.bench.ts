/**
 * Benchmark (not a test): one full Cartesian control step of the six-axis demo arm with the singular-value
 * damping schedule (σ_min estimated every step), against the same step written plainly with mathjs and with
 * ml-matrix. Prints medians (ns/step) over batches, allocation evidence (also for every optional feature:
 * acceleration limits, drift correction, numerical filtering, the stop-before guard, the null-space term and
 * a jog that rides the joint limits), ratios and the throughput of a 10-s trial at 1 kHz.
 * Run: pnpm bench   (tsx bench/control-step.bench.ts; add --quick for fewer batches and shorter library
 * runs; the warm-up is the same)
 * Units: SI; times in ns per step.
 */

import { PerformanceObserver } from "node:perf_hooks";
import * as math from "mathjs";
import { Matrix, SingularValueDecomposition, solve as mlSolve } from "ml-matrix";
import {
  controlStep, createControlReport, createControlState, createControlWorkspace, defaultControlParams, demoArms,
  dampingFor, ratedJointAccel,
} from "../src/index.ts";
import type { ArmModel, ControlParams, DemoArm } from "../src/index.ts";

const quick = process.argv.includes("--quick");
const arm6 = demoArms.find((a) => a.slug === "cell-arm-6")!;
const arm7 = demoArms.find((a) => a.slug === "cell-arm-7")!;
const DT = 0.001;

// Command: a 0.1 m/s twist turning in a circle with a 2 s period, plus a slow wrist roll, precomputed so
// the loop allocates nothing. The arm circles around the ready pose and never drifts away.
const PERIOD = 2000;
const twists = new Float64Array(6 * PERIOD);
for (let i = 0; i < PERIOD; i++) {
  const ph = (2 * Math.PI * i) / PERIOD;
  twists.set([0.1 * Math.cos(ph), 0.1 * Math.sin(ph), 0.02 * Math.sin(2 * ph), 0, 0, 0.2 * Math.cos(ph)], 6 * i);
}
const params: ControlParams = {
  ...defaultControlParams(),
  damping: { kind: "singular-value", epsilon: 0.04, lambdaMax: 0.04 },
};

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m]! : (s[m - 1]! + s[m]!) / 2;
}

// ---------- ours ----------
const ws = createControlWorkspace(arm6.model);
const state = createControlState(arm6.model, arm6.readyPose);
const report = createControlReport();
let tick = 0;
// Preallocated views of the command table (subarray allocates), so the timed loop allocates nothing.
const views: Float64Array[] = [];
for (let i = 0; i < PERIOD; i++) views.push(twists.subarray(6 * i, 6 * i + 6));
function runOursNoAlloc(steps: number): void {
  for (let s = 0; s < steps; s++) {
    controlStep(ws, state, params, views[tick % PERIOD]!, DT, report);
    tick++;
  }
}

function timeBatches(run: (n: number) => void, batchSize: number, batches: number): number[] {
  const out: number[] = [];
  for (let b = 0; b < batches; b++) {
    const t0 = process.hrtime.bigint();
    run(batchSize);
    const t1 = process.hrtime.bigint();
    out.push(Number(t1 - t0) / batchSize);
  }
  return out;
}

// ---------- plain mathjs ----------
function dhStd(a: number, alpha: number, d: number, theta: number): number[][] {
  const ct = Math.cos(theta), st = Math.sin(theta), ca = Math.cos(alpha), sa = Math.sin(alpha);
  return [[ct, -st * ca, st * sa, a * ct], [st, ct * ca, -ct * sa, a * st], [0, sa, ca, d], [0, 0, 0, 1]];
}
function plainMathjsStep(model: ArmModel, q: number[], twist: number[], caps: number[], dt: number): number[] {
  const n = q.length;
  let T: math.Matrix = math.identity(4) as math.Matrix;
  const frames: math.Matrix[] = [T];
  for (let i = 0; i < n; i++) {
    const j = model.joints[i]!;
    T = math.multiply(T, math.matrix(dhStd(j.a, j.alpha, j.d, j.theta + q[i]!)));
    frames.push(T);
  }
  const tcp = math.multiply(T, math.matrix(Array.from(model.tool!).reduce<number[][]>((rows, v, i) => {
    if (i % 4 === 0) rows.push([]);
    rows[rows.length - 1]!.push(v);
    return rows;
  }, []))) as math.Matrix;
  const p = [tcp.get([0, 3]), tcp.get([1, 3]), tcp.get([2, 3])] as number[];
  const cols: number[][] = [];
  for (let i = 0; i < n; i++) {
    const F = frames[i]!;
    const z = [F.get([0, 2]), F.get([1, 2]), F.get([2, 2])] as number[];
    const o = [F.get([0, 3]), F.get([1, 3]), F.get([2, 3])] as number[];
    const lin = math.cross(z, math.subtract(p, o) as number[]) as number[];
    cols.push([...lin, ...z]);
  }
  const J = math.transpose(math.matrix(cols));
  const JJt = math.multiply(J, math.transpose(J));
  const eig = math.eigs(JJt) as unknown as { values: math.Matrix };
  const values = (eig.values.toArray() as number[]).map((v) => Math.sqrt(Math.max(0, v)));
  const sigmaMin = Math.min(...values);
  const lambda = dampingFor(sigmaMin, { epsilon: 0.04, lambdaMax: 0.04 });
  const A = math.add(JJt, math.multiply(lambda * lambda, math.identity(6))) as math.Matrix;
  const y = math.lusolve(A, twist.map((v) => [v])) as math.Matrix;
  const qdot = (math.multiply(math.transpose(J), y) as math.Matrix).toArray().flat() as number[];
  let s = 1;
  for (let i = 0; i < n; i++) s = Math.min(s, caps[i]! / Math.abs(qdot[i]!));
  const ach = (math.multiply(J, qdot) as math.Matrix).toArray() as number[];
  const lin = math.norm(ach.slice(0, 3)) as number;
  if (lin * s > 0.25) s = 0.25 / lin;
  return q.map((qi, i) => qi + s * qdot[i]! * dt);
}

// ---------- plain ml-matrix ----------
function plainMlStep(model: ArmModel, q: number[], twist: number[], caps: number[], dt: number): number[] {
  const n = q.length;
  let T = Matrix.eye(4);
  const frames: Matrix[] = [T];
  for (let i = 0; i < n; i++) {
    const j = model.joints[i]!;
    T = T.mmul(new Matrix(dhStd(j.a, j.alpha, j.d, j.theta + q[i]!)));
    frames.push(T);
  }
  const tool = Matrix.from1DArray(4, 4, Array.from(model.tool!));
  const tcp = T.mmul(tool);
  const p = [tcp.get(0, 3), tcp.get(1, 3), tcp.get(2, 3)];
  const J = new Matrix(6, n);
  for (let i = 0; i < n; i++) {
    const F = frames[i]!;
    const z = [F.get(0, 2), F.get(1, 2), F.get(2, 2)];
    const r = [p[0]! - F.get(0, 3), p[1]! - F.get(1, 3), p[2]! - F.get(2, 3)];
    J.setColumn(i, [z[1]! * r[2]! - z[2]! * r[1]!, z[2]! * r[0]! - z[0]! * r[2]!, z[0]! * r[1]! - z[1]! * r[0]!, ...z]);
  }
  const svd = new SingularValueDecomposition(J, { computeLeftSingularVectors: false, computeRightSingularVectors: false });
  const sigmaMin = Math.min(...svd.diagonal);
  const lambda = dampingFor(sigmaMin, { epsilon: 0.04, lambdaMax: 0.04 });
  const A = J.mmul(J.transpose()).add(Matrix.eye(6).mul(lambda * lambda));
  const y = mlSolve(A, Matrix.columnVector(twist));
  const qdot = J.transpose().mmul(y).to1DArray();
  let s = 1;
  for (let i = 0; i < n; i++) s = Math.min(s, caps[i]! / Math.abs(qdot[i]!));
  const ach = J.mmul(Matrix.columnVector(qdot)).to1DArray();
  const lin = Math.hypot(ach[0]!, ach[1]!, ach[2]!);
  if (lin * s > 0.25) s = 0.25 / lin;
  return q.map((qi, i) => qi + s * qdot[i]! * dt);
}

function plainRunner(step: typeof plainMathjsStep): (n: number) => void {
  let q = [...arm6.readyPose];
  const caps = arm6.model.joints.map((j) => j.maxSpeed!);
  let t = 0;
  return (steps: number) => {
    for (let s = 0; s < steps; s++) {
      const o = 6 * (t % PERIOD);
      q = step(arm6.model, q, Array.from(twists.subarray(o, o + 6)), caps, DT);
      t++;
    }
  };
}

/**
 * One runner per optional feature, for the allocation check: acceleration limits at the rated values, drift
 * correction K = 250/s, numerical filtering with a wide ε (the tracked pair and the full eigen-decomposition
 * fallback), the stop-before guard with acceleration limits, the seven-axis arm with the null-space term,
 * and large random twists that ride the joint limits with acceleration limits (the stopping-horizon search).
 */
function featureRuns(): Array<{ name: string; run: (n: number) => void }> {
  const rated = (d: DemoArm) => d.model.joints.map((j) => ratedJointAccel(j));
  const drift = { gain: 250, maxPositionError: 0.005, maxOrientationError: 0.05 };
  const runner = (demo: DemoArm, p: ControlParams, twistOf: (t: number) => Float64Array) => {
    const w = createControlWorkspace(demo.model);
    const st = createControlState(demo.model, demo.readyPose);
    const rep = createControlReport();
    let t = 0;
    return (n: number) => {
      for (let s = 0; s < n; s++) {
        controlStep(w, st, p, twistOf(t), DT, rep);
        t++;
      }
    };
  };
  const circle = (t: number) => views[t % PERIOD]!;
  // Large random twists, changed every 300 steps (precomputed, so the loop allocates nothing).
  const wild: Float64Array[] = [];
  let seed = 12345;
  const rand = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
  for (let i = 0; i < 64; i++) wild.push(Float64Array.from([0, 1, 2, 3, 4, 5].map((k) => (k < 3 ? 0.6 : 3) * (2 * rand() - 1))));
  const wildOf = (t: number) => wild[Math.floor(t / 300) % wild.length]!;
  return [
    { name: "acceleration limits (rated)", run: runner(arm6, { ...params, jointAccelLimits: rated(arm6) }, circle) },
    { name: "drift correction K = 250/s", run: runner(arm6, { ...params, driftCorrection: drift }, circle) },
    {
      name: "numerical filtering, ε = 0.3 (tracked + fallback)",
      run: runner(arm6, { ...params, dampSmallestOnly: true, damping: { kind: "singular-value", epsilon: 0.3, lambdaMax: 0.04 } }, circle),
    },
    {
      name: "stop-before guard + acceleration limits",
      run: runner(arm6, { ...params, jointAccelLimits: rated(arm6), guard: { policy: "stop-before", sigmaStop: 0.02, releaseFactor: 1.5 } }, circle),
    },
    {
      name: "seven-axis, null space + drift + accel",
      run: runner(arm7, { ...params, nullSpace: { gain: 0.5 }, driftCorrection: drift, jointAccelLimits: rated(arm7) }, circle),
    },
    {
      name: "joint-limit jog + acceleration limits",
      run: runner(arm6, { ...params, tcpLinearCap: Infinity, tcpAngularCap: Infinity, jointAccelLimits: rated(arm6) }, wildOf),
    },
  ];
}

async function main(): Promise<void> {
  console.log(`node ${process.version}, ${process.platform}/${process.arch}${quick ? ", quick run" : ""}`);
  // Warm-up (JIT), the same in both modes: the timed function itself (so its loop is optimised too),
  // at least 200k steps and at least 1 s, so every function on the path is in TurboFan code and one full
  // σ refresh cycle (250 steps) has run many times. --quick only shortens what follows.
  const w0 = process.hrtime.bigint();
  let warmSteps = 0;
  while (warmSteps < 200_000 || Number(process.hrtime.bigint() - w0) < 1e9) {
    runOursNoAlloc(50_000);
    warmSteps += 50_000;
  }
  const batch = 100_000;
  const ours = timeBatches(runOursNoAlloc, batch, quick ? 7 : 15);
  const oursMedian = median(ours);
  console.log(`ours:      median ${oursMedian.toFixed(0)} ns/step over ${ours.length} batches of ${batch} ` +
    `after ${warmSteps} warm-up steps ` +
    `(min ${Math.min(...ours).toFixed(0)}, max ${Math.max(...ours).toFixed(0)})`);

  // Allocation check: count GC events and heap growth over 1e6 steps (no allocation → no scavenge).
  let gcEvents = 0;
  const obs = new PerformanceObserver((list) => { gcEvents += list.getEntries().length; });
  obs.observe({ entryTypes: ["gc"] });
  const g = (globalThis as { gc?: () => void }).gc;
  if (g) g();
  await new Promise((r) => setTimeout(r, 50));
  gcEvents = 0;
  const allocSteps = quick ? 200_000 : 1_000_000;
  const h0 = process.memoryUsage().heapUsed;
  runOursNoAlloc(allocSteps);
  const h1 = process.memoryUsage().heapUsed;
  await new Promise((r) => setTimeout(r, 50));
  obs.disconnect();
  console.log(`allocation: heapUsed ${(h1 - h0) >= 0 ? "+" : ""}${h1 - h0} bytes over ${allocSteps} steps ` +
    `(${((h1 - h0) / allocSteps).toFixed(4)} B/step), GC events during the run: ${gcEvents}`);

  // The same check for every optional feature (each its own workspace, warmed up first).
  for (const feature of featureRuns()) {
    feature.run(quick ? 100_000 : 200_000);
    if (g) g();
    await new Promise((r) => setTimeout(r, 50));
    let events = 0;
    const o = new PerformanceObserver((list) => { events += list.getEntries().length; });
    o.observe({ entryTypes: ["gc"] });
    const steps = quick ? 100_000 : 300_000;
    const f0 = process.hrtime.bigint();
    feature.run(steps);
    const ns = Number(process.hrtime.bigint() - f0) / steps;
    await new Promise((r) => setTimeout(r, 50));
    o.disconnect();
    console.log(`  ${feature.name.padEnd(50)} ${ns.toFixed(0).padStart(6)} ns/step, GC events: ${events}`);
  }

  // Plain versions.
  const mj = plainRunner(plainMathjsStep);
  mj(quick ? 100 : 500);
  const mjTimes = timeBatches(mj, quick ? 100 : 300, quick ? 3 : 7);
  const ml = plainRunner(plainMlStep);
  ml(quick ? 1000 : 5000);
  const mlTimes = timeBatches(ml, quick ? 1000 : 3000, quick ? 3 : 7);
  const mjMedian = median(mjTimes);
  const mlMedian = median(mlTimes);
  console.log(`mathjs:    median ${mjMedian.toFixed(0)} ns/step   ratio ${(mjMedian / oursMedian).toFixed(0)}x (target ≥ 50x)`);
  console.log(`ml-matrix: median ${mlMedian.toFixed(0)} ns/step   ratio ${(mlMedian / oursMedian).toFixed(0)}x (target ≥ 10x)`);

  // A 10-s trial at 1 kHz: fresh workspace and state each run (setup included), 10,000 steps.
  const trials: number[] = [];
  for (let r = 0; r < (quick ? 3 : 9); r++) {
    const t0 = process.hrtime.bigint();
    const w = createControlWorkspace(arm6.model);
    const st = createControlState(arm6.model, arm6.readyPose);
    const rep = createControlReport();
    for (let i = 0; i < 10_000; i++) controlStep(w, st, params, views[i % PERIOD]!, DT, rep);
    trials.push(Number(process.hrtime.bigint() - t0) / 1e6);
  }
  const trialMs = median(trials);
  console.log(`10-s trial at 1 kHz (10,000 steps incl. setup): median ${trialMs.toFixed(2)} ms → ` +
    `${(10_000 / (trialMs / 1000)).toExponential(2)} steps/s, ${(10_000 / trialMs).toFixed(0)}x real time`);
  console.log(`final report: sigmaMin ${report.sigmaMin.toFixed(4)}, lambda ${report.lambda.toFixed(4)}, ` +
    `binding ${report.binding}, fault ${report.fault}`);
}

void main();
