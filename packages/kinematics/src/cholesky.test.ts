import { describe, expect, it } from "vitest";
import { demoArms, geometricJacobian } from "./index.ts";
import {
  cholesky6Into, choleskyInto, choleskyLoopInto, choleskySolve6InPlace, choleskySolveLoopInPlace, gram6Into, gramInto,
  gramLoopInto,
} from "./cholesky.ts";
import { arm6, maxAbsDiff, mixedArm, randomMatrix, rng } from "./test-fixtures.ts";

/** 6 x cols matrices: random ones and Jacobians of the demo arms and two test arms at random joint positions. */
function sixRowMatrices(count: number, seed: number): { J: Float64Array; cols: number }[] {
  const next = rng(seed);
  const arms = [...demoArms.map((d) => d.model), arm6, mixedArm("standard"), mixedArm("modified")];
  const out: { J: Float64Array; cols: number }[] = [];
  for (let i = 0; i < count; i++) {
    if (i % 3 === 0) {
      const cols = 6 + Math.floor(next() * 4);
      out.push({ J: randomMatrix(6, cols, next), cols });
    } else {
      const arm = arms[i % arms.length]!;
      const q = arm.joints.map(() => 4 * next() - 2);
      if (i % 10 === 1) q[4] = 0; // the wrist singularity of the six-axis arms
      out.push({ J: geometricJacobian(arm, q), cols: arm.joints.length });
    }
  }
  return out;
}

describe("the written-out 6x6 kernels are their loops, bit for bit", () => {
  // Pinning tests (the deliberate copies of README "Deliberate copies"): gram6Into, cholesky6Into and
  // choleskySolve6InPlace do the loops' operations in the loops' order (derived), so every number is equal.
  it("gram6Into is the Gram loop's J Jᵀ for 6 x n matrices", () => {
    for (const { J, cols } of sixRowMatrices(600, 11)) {
      const G6 = new Float64Array(36), Gloop = new Float64Array(36);
      gram6Into(J, cols, G6);
      expect(gramLoopInto(J, 6, cols, Gloop)).toBe(6);
      expect(Array.from(G6)).toEqual(Array.from(Gloop));
    }
  });

  it("cholesky6Into and choleskySolve6InPlace are the loops' factor and solve, also of G + λ²I and where they fail", () => {
    const next = rng(12);
    let failed = 0;
    for (const { J, cols } of sixRowMatrices(600, 13)) {
      const G = new Float64Array(36);
      gram6Into(J, cols, G);
      const lambda2 = next() < 0.3 ? 0 : (0.05 * next()) ** 2;
      for (let i = 0; i < 6; i++) G[i * 7] = G[i * 7]! + lambda2;
      if (next() < 0.05) G[35] = -G[35]!; // indefinite: both refuse at the same pivot
      const L6 = new Float64Array(36).fill(7), Lloop = new Float64Array(36).fill(7);
      const ok = cholesky6Into(G, L6);
      expect(choleskyLoopInto(G, 6, Lloop)).toBe(ok);
      if (!ok) {
        failed++;
        continue;
      }
      expect(Array.from(L6)).toEqual(Array.from(Lloop));
      const b = Float64Array.from({ length: 6 }, () => 2 * next() - 1);
      const x6 = Float64Array.from(b), xloop = Float64Array.from(b);
      choleskySolve6InPlace(L6, x6);
      choleskySolveLoopInPlace(Lloop, 6, xloop);
      expect(Array.from(x6)).toEqual(Array.from(xloop));
    }
    expect(failed).toBeGreaterThan(10);
  });
});

describe("gramInto", () => {
  it("gives J Jᵀ for a wide J and Jᵀ J for a tall one, each the sum of products in column (row) order", () => {
    // Derived: the definition, summed in the same order, so exactly equal.
    const next = rng(14);
    for (const [rows, cols] of [[2, 5], [3, 3], [5, 2], [6, 4], [6, 6], [6, 8], [7, 3]] as const) {
      const J = randomMatrix(rows, cols, next);
      const k = Math.min(rows, cols);
      const G = new Float64Array(k * k);
      expect(gramInto(J, rows, cols, G)).toBe(k);
      for (let i = 0; i < k; i++) {
        for (let j = 0; j < k; j++) {
          let s = 0;
          if (rows <= cols) for (let c = 0; c < cols; c++) s += J[i * cols + c]! * J[j * cols + c]!;
          else for (let r = 0; r < rows; r++) s += J[r * cols + i]! * J[r * cols + j]!;
          expect(G[i * k + j]).toBe(s);
        }
      }
    }
  });

  it("choleskyInto factors in place (L = A), as the damped solve and the σ estimator use it", () => {
    // Derived: L Lᵀ reproduces A; in place and into a separate L give the same factor.
    const next = rng(15);
    for (const k of [2, 3, 5, 6]) {
      const J = randomMatrix(k, k + 2, next);
      const A = new Float64Array(k * k);
      gramInto(J, k, k + 2, A);
      const L = new Float64Array(k * k), inPlace = Float64Array.from(A);
      expect(choleskyInto(A, k, L)).toBe(true);
      expect(choleskyInto(inPlace, k, inPlace)).toBe(true);
      expect(Array.from(inPlace)).toEqual(Array.from(L));
      const LLt = new Float64Array(k * k);
      for (let i = 0; i < k; i++) for (let j = 0; j < k; j++) for (let p = 0; p < k; p++) LLt[i * k + j] = LLt[i * k + j]! + L[i * k + p]! * L[j * k + p]!;
      expect(maxAbsDiff(LLt, A)).toBeLessThan(1e-12);
    }
  });
});
