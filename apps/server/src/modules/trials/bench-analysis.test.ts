import { findDemoArm, geometricJacobian } from "@jogwright/kinematics";
import { defaultProfileParams, type TrialDefinition } from "@jogwright/shared";
import { Matrix, SingularValueDecomposition } from "ml-matrix";
import { describe, expect, it } from "vitest";
import { dominates, paretoFront, type TradeOffPoint } from "./pareto.ts";
import { runJob } from "./run-job.ts";
import { runSweep, type RunFn } from "./sweep.ts";
import { cartesianMap, jointMap } from "./singularity-map.ts";

const six = findDemoArm("cell-arm-6")!;

/** σ_min by ml-matrix's SVD (npm registry), the reference. */
function referenceSigmaMin(q: readonly number[]): number {
  const J = geometricJacobian(six.model, q);
  const rows = Array.from({ length: 6 }, (_, r) => Array.from(J.slice(r * 6, r * 6 + 6)));
  return Math.min(...new SingularValueDecomposition(new Matrix(rows)).diagonal);
}

describe("sweep trade-off: the Pareto front", () => {
  it("contains no dominated point, and every point off the front is dominated by one on it (seeded random sets)", () => {
    let seed = 12345;
    const rand = () => ((seed = (seed * 1103515245 + 12345) % 2 ** 31) / 2 ** 31);
    for (let trial = 0; trial < 50; trial++) {
      const points: TradeOffPoint[] = Array.from({ length: 5 + Math.floor(rand() * 100) }, () => ({ x: Math.round(rand() * 20), y: Math.round(rand() * 20) }));
      points.push({ x: Number.NaN, y: 0 }); // a stalled run without a metric is never on the front
      const front = paretoFront(points);
      const onFront = new Set(front);
      expect(onFront.has(points.length - 1)).toBe(false);
      for (const i of front) for (let j = 0; j < points.length; j++) expect(dominates(points[j]!, points[i]!)).toBe(false);
      points.forEach((p, j) => {
        if (!onFront.has(j) && Number.isFinite(p.x)) expect(front.some((i) => dominates(points[i]!, p))).toBe(true);
      });
    }
  });

  it("a hand-checked case: (1,5) (2,2) (3,3) (4,1) (2,2) → front (1,5) (2,2) (2,2) (4,1)", () => {
    const pts = [{ x: 1, y: 5 }, { x: 2, y: 2 }, { x: 3, y: 3 }, { x: 4, y: 1 }, { x: 2, y: 2 }];
    expect(paretoFront(pts)).toEqual([0, 1, 4, 3]);
  });
});

describe("sweep runs on one cancel signal", () => {
  it("many runs waiting on the sweep's signal at once log no MaxListenersExceededWarning (each listens, as a pool task does)", async () => {
    const trial: TrialDefinition = {
      name: "short push", description: "", startPose: six.readyPose,
      segments: [{ kind: "twist", frame: "world", linearMPerS: [0.02, 0, 0], angularRadPerS: [0, 0, 0], durationS: 0.05 }],
    };
    // Like the pool: each queued run adds an abort listener to the signal and drops it when it ends.
    const run: RunFn = (job, signal) =>
      new Promise((resolve) => {
        const onAbort = () => {};
        signal?.addEventListener("abort", onAbort);
        setImmediate(() => {
          signal?.removeEventListener("abort", onAbort);
          resolve(runJob(job));
        });
      });
    const warnings: string[] = [];
    const onWarning = (w: Error) => warnings.push(w.name);
    process.on("warning", onWarning);
    try {
      const base = defaultProfileParams(six.model.joints.map((j) => j.maxSpeed!));
      const result = await runSweep(
        { arm: six.model, base, axes: [{ parameter: "damping.lambdaMaxM", from: 0.01, to: 0.05, steps: 4 }], trials: [trial, trial, trial, trial], x: "peakWristAccelRadPerS2", y: "maxDeviationM" },
        run, () => {}, new AbortController().signal,
      );
      await new Promise((r) => setImmediate(r)); // warnings are emitted on the next tick
      expect(result.points.every((p) => p.objectives !== null && p.finishedTrials === 4)).toBe(true);
      expect(warnings).not.toContain("MaxListenersExceededWarning");
    } finally {
      process.off("warning", onWarning);
    }
  });
});

describe("singularity maps", () => {
  it("over (q4, q5): the row q5 = 0 is singular for every q4 (a spherical wrist), and cells agree with ml-matrix's SVD", () => {
    // Wrist singularity of a spherical wrist at q5 = 0 (Siciliano, Sciavicco, Villani & Oriolo 2009, §3.3.2 —
    // from memory).
    const map = jointMap(six.model, { measure: "sigma-min", pose: six.readyPose, xJoint: 3, yJoint: 4, xRange: [-Math.PI, Math.PI], yRange: [-0.5, 0.5], resolution: 41 });
    const zeroRow = 20;
    expect(map.ys[zeroRow]).toBeCloseTo(0, 15);
    for (let c = 0; c < 41; c++) expect(map.values[zeroRow * 41 + c]).toBeLessThan(1e-12);
    for (const [r, c] of [[0, 0], [5, 17], [33, 40], [40, 3]] as const) {
      const q = [...six.readyPose];
      q[3] = map.xs[c]!;
      q[4] = map.ys[r]!;
      expect(map.values[r * 41 + c]).toBeCloseTo(referenceSigmaMin(q), 10);
    }
  });

  it("the condition number is σ_max/σ_min", () => {
    const s = jointMap(six.model, { measure: "sigma-min", pose: six.readyPose, xJoint: 3, yJoint: 4, resolution: 5 });
    const k = jointMap(six.model, { measure: "condition", pose: six.readyPose, xJoint: 3, yJoint: 4, resolution: 5 });
    const q = [...six.readyPose];
    q[3] = s.xs[1]!;
    q[4] = s.ys[1]!;
    const J = geometricJacobian(six.model, q);
    const sv = new SingularValueDecomposition(new Matrix(Array.from({ length: 6 }, (_, r) => Array.from(J.slice(r * 6, r * 6 + 6))))).diagonal;
    expect(k.values[1 * 5 + 1]! * s.values[1 * 5 + 1]!).toBeCloseTo(Math.max(...sv), 9);
  });

  it("over a Cartesian plane at fixed orientation: the centre is the given pose, far corners out of reach are NaN", () => {
    const map = cartesianMap(six.model, { measure: "sigma-min", pose: six.readyPose, plane: "xz", halfWidthM: 1.5, resolution: 31 });
    expect(map.values[15 * 31 + 15]).toBeCloseTo(referenceSigmaMin(six.readyPose), 9);
    // 1.5 m from the ready TCP in x and z is beyond the arm's reach (its links sum to about 1.2 m).
    expect(Number.isNaN(map.values[0]!)).toBe(true);
    expect(Number.isNaN(map.values[31 * 31 - 1]!)).toBe(true);
    // Near the ready pose (±0.2 m, 2 cm steps) the continuation solves (nearly) every point.
    const near = cartesianMap(six.model, { measure: "sigma-min", pose: six.readyPose, plane: "xz", halfWidthM: 0.2, resolution: 21 });
    const reachable = Array.from(near.values).filter((v) => !Number.isNaN(v)).length;
    expect(reachable).toBeGreaterThan(21 * 21 * 0.9);
  });
});
