import { describe, expect, it } from "vitest";
import { createSigmaTracker, demoArms, estimateSigmaMin, geometricJacobian, gramInto, singularValues } from "./index.ts";
import type { ArmModel } from "./index.ts";
import { arm6, qA, rng } from "./test-fixtures.ts";
import { choleskySolveInPlace } from "./cholesky.ts";
import { jacobianPoseGramInto } from "./jacobian.ts";
import { compileArm } from "./arm.ts";
import { estimateSigmaMinByLoop, estimateSigmaMinSolve6 } from "./sigma-estimate.ts";
import type { SigmaTracker } from "./sigma-estimate.ts";

/** Walks q smoothly (random slowly varying joint rates) and compares the estimate with the full SVD. */
function trackAlongPath(arm: ArmModel, q0: number[], steps: number, seed: number, dq: number): number {
  const n = q0.length;
  const k = Math.min(6, n);
  const t = createSigmaTracker(k);
  const G = new Float64Array(k * k);
  const q = [...q0];
  const next = rng(seed);
  const rate = q.map(() => 2 * next() - 1);
  let worst = 0;
  for (let s = 0; s < steps; s++) {
    if (s % 200 === 0) for (let i = 0; i < n; i++) rate[i] = 2 * next() - 1;
    for (let i = 0; i < n; i++) q[i] = q[i]! + dq * rate[i]!;
    const J = geometricJacobian(arm, q);
    gramInto(J, 6, n, G);
    estimateSigmaMin(t, G);
    const exact = singularValues(J, 6, n);
    const sMin = exact[k - 1]!;
    const err = Math.abs(t.sigmaMin - sMin) / Math.max(sMin, 1e-6 * exact[0]!);
    worst = Math.max(worst, err);
  }
  return worst;
}

describe("estimateSigmaMin (warm-started block inverse iteration)", () => {
  it("tracks σ_min of the full one-sided Jacobi SVD within 5e-4 relative along a 1 kHz-like jog path", () => {
    // Derived oracle: our full SVD, itself checked against ml-matrix in svd.test.ts.
    expect(trackAlongPath(arm6, qA, 3000, 1, 0.001)).toBeLessThan(5e-4);
    expect(trackAlongPath(demoArms[0]!.model, demoArms[0]!.readyPose, 3000, 2, 0.001)).toBeLessThan(5e-4);
    expect(trackAlongPath(demoArms[1]!.model, demoArms[1]!.readyPose, 3000, 3, 0.001)).toBeLessThan(5e-4);
  });

  it("stays accurate with large jumps between calls (falls back to the full decomposition)", () => {
    // Derived, as above.
    expect(trackAlongPath(arm6, qA, 300, 4, 0.05)).toBeLessThan(5e-4);
  });

  it("follows σ_min through a wrist singularity to near zero and back", () => {
    // Derived: σ_min of ARM-6 vanishes at θ5 = 0 (Siciliano et al. 2009, sect. 3.3.2).
    const t = createSigmaTracker(6);
    const G = new Float64Array(36);
    let worstAbs = 0;
    for (let s = 0; s <= 2000; s++) {
      const q = [0.1, 0.5, -0.4, 0.3, 0.2 - (0.4 * s) / 2000, -0.2];
      const J = geometricJacobian(arm6, q);
      gramInto(J, 6, 6, G);
      estimateSigmaMin(t, G);
      const exact = singularValues(J, 6, 6)[5]!;
      worstAbs = Math.max(worstAbs, Math.abs(t.sigmaMin - exact) - 5e-4 * exact);
    }
    expect(worstAbs).toBeLessThan(1e-6);
  });

  it("reports w = product of the singular values", () => {
    // Yoshikawa 1985: w = σ1·…·σm; singular values from our full SVD.
    const t = createSigmaTracker(6);
    const G = new Float64Array(36);
    const J = geometricJacobian(arm6, qA);
    gramInto(J, 6, 6, G);
    estimateSigmaMin(t, G);
    estimateSigmaMin(t, G);
    const prod = singularValues(J, 6, 6).reduce((a, b) => a * b, 1);
    expect(t.manipulability).toBeCloseTo(prod, 12);
  });

  it("the written-out k = 6 estimator gives the general loop's results bit for bit, factor and vectors included", () => {
    // Pinning test (README "Deliberate copies"): estimate6 writes out the loop (Cholesky of G + δI, the
    // two-vector iteration, the 2x2 Rayleigh–Ritz step) with the same operations in the same order (derived).
    // Both demo arms along jog paths with jumps, through the wrist singularity (q5 = 0) and with refreshes.
    const fields = (t: SigmaTracker) => [t.sigmaMin, t.sigmaSecond, t.manipulability, t.iterations, t.usedFullDecomposition, t.factorValid, t.shift, t.warm, t.callsSinceRefresh, ...t.x1, ...t.x2];
    let iterated = 0, full = 0;
    for (const arm of demoArms) {
      const n = arm.model.joints.length;
      const written = createSigmaTracker(6, 4, 97), loop = createSigmaTracker(6, 4, 97);
      const G = new Float64Array(36);
      const q = [...arm.readyPose];
      const next = rng(29);
      for (let s = 0; s < 1500; s++) {
        const jump = s % 300 === 150 ? 0.3 : 0.004;
        for (let i = 0; i < n; i++) q[i] = q[i]! + jump * (2 * next() - 1);
        if (n === 6 && s >= 700 && s < 760) q[4] = (s - 730) * 1e-4; // through the wrist singularity
        gramInto(geometricJacobian(arm.model, q), 6, n, G);
        estimateSigmaMin(written, G);
        estimateSigmaMinByLoop(loop, G);
        expect(fields(written)).toEqual(fields(loop));
        if (written.factorValid) expect(Array.from(written.L)).toEqual(Array.from(loop.L));
        if (written.usedFullDecomposition) full++;
        else iterated++;
      }
    }
    expect(iterated).toBeGreaterThan(2500);
    expect(full).toBeGreaterThan(30);
  });

  it("the control step's fused calls give bit-identical results to the separate ones", () => {
    // Derived: same operations in the same order. jacobianPoseGramInto vs geometricJacobian + gramInto;
    // estimateSigmaMinSolve6 vs estimateSigmaMin, and its solve vs choleskySolveInPlace with the tracker's factor.
    for (const arm of demoArms) {
      const kernel = compileArm(arm.model);
      const n = kernel.n;
      const ta = createSigmaTracker(6), tb = createSigmaTracker(6);
      const J = new Float64Array(6 * n), pose = new Float64Array(16), G = new Float64Array(36), Gb = new Float64Array(36);
      const b = new Float64Array([0.1, -0.2, 0.05, 0.3, 0.1, -0.4]), y = new Float64Array(6);
      const q = [...arm.readyPose];
      const next = rng(7);
      let solved = 0;
      for (let s = 0; s < 600; s++) {
        for (let i = 0; i < n; i++) q[i] = q[i]! + 0.002 * (2 * next() - 1);
        jacobianPoseGramInto(kernel, q, J, pose, G);
        const Jref = geometricJacobian(arm.model, q);
        gramInto(Jref, 6, n, Gb);
        expect(Array.from(J)).toEqual(Array.from(Jref));
        expect(Array.from(G)).toEqual(Array.from(Gb));
        estimateSigmaMin(ta, Gb);
        estimateSigmaMinSolve6(tb, G, b, y);
        expect([tb.sigmaMin, tb.sigmaSecond, tb.manipulability, tb.factorValid]).toEqual([ta.sigmaMin, ta.sigmaSecond, ta.manipulability, ta.factorValid]);
        if (tb.factorValid) {
          const yRef = Float64Array.from(b);
          choleskySolveInPlace(tb.L, 6, yRef);
          expect(Array.from(y)).toEqual(Array.from(yRef));
          solved++;
        }
      }
      expect(solved).toBeGreaterThan(500);
    }
  });
});
