import { describe, expect, it } from "vitest";
import { add, identity, inv, lusolve, multiply, transpose } from "mathjs";
import { Matrix, SingularValueDecomposition, pseudoInverse } from "ml-matrix";
import {
  KinematicsInputError, createSigmaTracker, dampedLeastSquares, dampedLeastSquaresInto, dampingFor,
  estimateSigmaMin, geometricJacobian, gramInto,
} from "./index.ts";
import { arm6, matVec, maxAbsDiff, norm, planar2R, qA, qB, randomMatrix, rng, toRows } from "./test-fixtures.ts";

/** DLS in SVD form Σ gain(σ_i)·v_i (u_iᵀ twist), with ml-matrix's SVD (Buss 2004; METHODS.md §1). */
function svdForm(J: Float64Array, rows: number, cols: number, twist: number[], gain: (s: number, i: number) => number): number[] {
  const svd = new SingularValueDecomposition(new Matrix(toRows(J, rows, cols)), { autoTranspose: true });
  const U = svd.leftSingularVectors, V = svd.rightSingularVectors, s = svd.diagonal;
  const out = new Array(cols).fill(0);
  for (let i = 0; i < s.length; i++) {
    let ut = 0;
    for (let r = 0; r < rows; r++) ut += U.get(r, i) * twist[r]!;
    const g = gain(s[i]!, i) * ut;
    for (let c = 0; c < cols; c++) out[c] += g * V.get(c, i);
  }
  return out;
}

const twistB = [0.02, -0.01, 0.03, 0.1, 0, 0.05];

/** u_m, the left singular direction of σ_min of a 6 x 6 J, as the control step's σ estimator finds it (cold start). */
function smallestDirection(J: Float64Array): Float64Array {
  const t = createSigmaTracker(6);
  const G = new Float64Array(36);
  gramInto(J, 6, 6, G);
  estimateSigmaMin(t, G);
  return t.x1;
}

describe("dampedLeastSquares", () => {
  it("with λ = 0 equals the plain inverse J⁻¹·twist where J is invertible", () => {
    // Reference library: mathjs inv and lusolve.
    const next = rng(41);
    for (let trial = 0; trial < 5; trial++) {
      const q = arm6.joints.map(() => 3 * next() - 1.5);
      const J = geometricJacobian(arm6, q);
      const tw = [0, 1, 2, 3, 4, 5].map(() => 2 * next() - 1);
      const qdot = dampedLeastSquares(J, 6, 6, tw, 0);
      const byInv = multiply(inv(toRows(J, 6, 6)), tw) as number[];
      const byLu = (lusolve(toRows(J, 6, 6), tw) as number[][]).map((r) => r[0]!);
      const scale = Math.max(1, norm(byInv));
      expect(maxAbsDiff(qdot, byInv) / scale).toBeLessThan(1e-10);
      expect(maxAbsDiff(qdot, byLu) / scale).toBeLessThan(1e-10);
    }
    // METHODS.md §1b [CALC], secondary: the exact inverse at q_B counter-rotates joints 4 and 6.
    const q = dampedLeastSquares(geometricJacobian(arm6, qB), 6, 6, twistB, 0);
    expect(maxAbsDiff(q, [-0.052585, 0.075945, 0.017838, -8.051968, -0.112341, 7.960227])).toBeLessThan(2e-6);
  });

  it("with λ = 0 on a wide 6 x 7 J equals the pseudo-inverse solution", () => {
    // Reference library: ml-matrix pseudoInverse.
    const next = rng(42);
    const J = randomMatrix(6, 7, next);
    const tw = [0.1, -0.2, 0.3, 0.05, 0, -0.1];
    const ref = pseudoInverse(new Matrix(toRows(J, 6, 7))).mmul(Matrix.columnVector(tw)).to1DArray();
    expect(maxAbsDiff(dampedLeastSquares(J, 6, 7, tw, 0), ref)).toBeLessThan(1e-11);
  });

  it("equals the SVD form Σ σ/(σ² + λ²)·v·uᵀ·twist and the normal-equation form (Jᵀ J + λ² I)⁻¹ Jᵀ twist", () => {
    // Buss 2004 (SVD form) with ml-matrix's SVD; Wampler 1986 / Nakamura & Hanafusa 1986 (from memory) for
    // the equivalent normal-equation form, evaluated with mathjs.
    const next = rng(43);
    for (const [r, c] of [[6, 6], [6, 7], [7, 6], [3, 5]] as const) {
      const J = randomMatrix(r, c, next);
      const tw = Array.from({ length: r }, () => 2 * next() - 1);
      const lambda = 0.3;
      const qdot = dampedLeastSquares(J, r, c, tw, lambda);
      expect(maxAbsDiff(qdot, svdForm(J, r, c, tw, (s) => s / (s * s + lambda * lambda)))).toBeLessThan(1e-12);
      const M = toRows(J, r, c);
      const I = (identity(c) as unknown as { toArray(): number[][] }).toArray();
      const A = add(multiply(transpose(M), M) as number[][], multiply(lambda * lambda, I) as number[][]) as number[][];
      const rhs = multiply(transpose(M), tw) as number[];
      const ne = (lusolve(A, rhs) as unknown as number[][]).map((row) => row[0]!);
      expect(maxAbsDiff(qdot, ne)).toBeLessThan(1e-12);
    }
  });

  it("never returns |qdot| above |twist|/(2λ), and the gain σ/(σ²+λ²) peaks at 1/(2λ) for σ = λ", () => {
    // Buss 2004 notes; Deo & Walker 1995 (bound); the peak location is derived (d/dσ = 0 at σ = λ).
    const next = rng(44);
    for (let trial = 0; trial < 200; trial++) {
      // Include near-singular Jacobians: ARM-6 with θ5 close to 0.
      const q = arm6.joints.map(() => 3 * next() - 1.5);
      if (trial % 2 === 0) q[4] = 1e-4 * (2 * next() - 1);
      const J = geometricJacobian(arm6, q);
      const tw = [0, 1, 2, 3, 4, 5].map(() => 2 * next() - 1);
      const lambda = 0.001 + 0.2 * next();
      expect(norm(dampedLeastSquares(J, 6, 6, tw, lambda))).toBeLessThanOrEqual((norm(tw) / (2 * lambda)) * (1 + 1e-12));
    }
    const lambda = 0.05;
    let best = 0, at = 0;
    for (let s = 0; s <= 1; s += 1e-5) {
      const g = s / (s * s + lambda * lambda);
      if (g > best) { best = g; at = s; }
    }
    expect(best).toBeCloseTo(1 / (2 * lambda), 6);
    expect(at).toBeCloseTo(lambda, 4);
  });

  it("returns zero joint rates at an exact singularity when the twist lies along the lost direction", () => {
    // Derived (METHODS.md §1a): the planar 2R arm stretched out (θ2 = 0) cannot move along its length.
    const J = geometricJacobian(planar2R(0.4, 0.3), [0, 0]);
    const qdot = dampedLeastSquares(J, 6, 2, [0.05, 0, 0, 0, 0, 0], 0.05);
    expect(norm(qdot)).toBeLessThan(1e-15);
  });

  it("reproduces the METHODS.md worked examples near the singularity", () => {
    // METHODS.md §1a and §2a [CALC] — secondary values; the SVD-form check above is primary.
    const J2 = new Float64Array([-0.0059996, -0.0059996, 0.69994, 0.29994]);
    expect(maxAbsDiff(dampedLeastSquares(J2, 2, 2, [0.05, 0], 0.05), [0.024106102, -0.057964139])).toBeLessThan(1e-6);
    const JB = geometricJacobian(arm6, qB);
    const lambda = dampingFor(0.005008798, { epsilon: 0.1, lambdaMax: 0.05 });
    expect(lambda).toBeCloseTo(0.04993724, 7);
    const q = dampedLeastSquares(JB, 6, 6, twistB, lambda);
    expect(maxAbsDiff(q, [-0.015918, 0.112703, 0.093078, -0.109613, -0.21993, 0.05425])).toBeLessThan(1e-6);
    expect(norm(twistB.map((v, i) => v - matVec(JB, 6, 6, q)[i]!))).toBeCloseTo(0.0561714, 6);
    for (const [l, qn] of [[0.01, 2.286940317], [0.05, 0.291334001], [0.1, 0.253867612]] as const) {
      expect(norm(dampedLeastSquares(JB, 6, 6, twistB, l))).toBeCloseTo(qn, 8);
    }
  });

  it("throws KinematicsInputError for λ = 0 at an exact singularity", () => {
    // Our API contract (common practice, no source).
    const J = geometricJacobian(arm6, [0.1, 0.5, -0.4, 0.3, 0, -0.2]);
    expect(() => dampedLeastSquares(J, 6, 6, twistB, 0)).toThrow(KinematicsInputError);
  });
});

describe("numerical filtering (damping only the smallest singular direction)", () => {
  it("equals Σ_{i<m} v_i u_iᵀ/σ_i + σ_m/(σ_m² + λ²)·v_m u_mᵀ", () => {
    // Maciejewski & Klein 1988 (from memory; METHODS.md §2d); SVD by ml-matrix.
    const JB = geometricJacobian(arm6, qB);
    const u = smallestDirection(JB);
    const lambda = 0.049937240;
    const out = new Float64Array(6);
    expect(dampedLeastSquaresInto(JB, 6, 6, twistB, lambda, out, u)).toBe(true);
    const ref = svdForm(JB, 6, 6, twistB, (s, i) => (i === 5 ? s / (s * s + lambda * lambda) : 1 / s));
    expect(maxAbsDiff(out, ref)).toBeLessThan(1e-10);
    // METHODS.md §2d [CALC], secondary.
    expect(maxAbsDiff(out, [-0.017751, 0.114483, 0.095709, -0.110609, -0.224859, 0.053347])).toBeLessThan(1e-6);
  });

  it("leaves a well-conditioned arm's solution equal to the plain inverse up to the last direction", () => {
    // Derived: at q_A with a twist orthogonal to u_m the filtered solution is the exact inverse.
    const J = geometricJacobian(arm6, qA);
    const u = smallestDirection(J);
    const tw = [0.1, 0.2, -0.1, 0.3, 0, 0.1];
    const dot = tw.reduce((a, v, i) => a + v * u[i]!, 0);
    const twPerp = tw.map((v, i) => v - dot * u[i]!);
    const out = new Float64Array(6);
    dampedLeastSquaresInto(J, 6, 6, twPerp, 0.5, out, u);
    expect(maxAbsDiff(out, dampedLeastSquares(J, 6, 6, twPerp, 0))).toBeLessThan(1e-12);
  });
});
