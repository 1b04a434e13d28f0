import { describe, expect, it } from "vitest";
import { det, eigs, multiply, transpose } from "mathjs";
import { Matrix, SingularValueDecomposition } from "ml-matrix";
import { geometricJacobian, manipulability, singularValues, svdInto, symmetricEigenInto } from "./index.ts";
import { arm6, maxAbsDiff, planar2R, qA, randomMatrix, rng, toRows } from "./test-fixtures.ts";

function mlSingularValues(A: Float64Array, rows: number, cols: number): number[] {
  const svd = new SingularValueDecomposition(new Matrix(toRows(A, rows, cols)), { autoTranspose: true });
  return [...svd.diagonal].sort((a, b) => b - a).slice(0, Math.min(rows, cols));
}

function mathjsSingularValues(A: Float64Array, rows: number, cols: number): number[] {
  // mathjs has no SVD: σ = sqrt(eigenvalues of the smaller Gram matrix) via mathjs eigs.
  const M = toRows(A, rows, cols);
  const G = rows <= cols ? multiply(M, transpose(M)) : multiply(transpose(M), M);
  const values = (eigs(G as number[][]).values as number[]).map((v) => Math.sqrt(Math.max(0, v)));
  return values.sort((a, b) => b - a);
}

describe("singularValues (one-sided Jacobi)", () => {
  const shapes: [number, number][] = [[6, 6], [6, 7], [7, 6], [3, 5], [2, 2], [6, 3]];

  it("agrees with ml-matrix SingularValueDecomposition on random matrices of several shapes", () => {
    // Reference library: ml-matrix.
    const next = rng(21);
    for (const [r, c] of shapes) {
      for (let trial = 0; trial < 5; trial++) {
        const A = randomMatrix(r, c, next);
        const s = singularValues(A, r, c);
        expect(s.length).toBe(Math.min(r, c));
        expect(maxAbsDiff(s, mlSingularValues(A, r, c))).toBeLessThan(1e-12);
      }
    }
  });

  it("agrees with mathjs (square roots of eigs of the Gram matrix) on Jacobians of ARM-6", () => {
    // Reference library: mathjs.
    const next = rng(22);
    for (let trial = 0; trial < 5; trial++) {
      const q = arm6.joints.map(() => 3 * next() - 1.5);
      const J = geometricJacobian(arm6, q);
      expect(maxAbsDiff(singularValues(J, 6, 6), mathjsSingularValues(J, 6, 6))).toBeLessThan(1e-10);
    }
  });

  it("returns them in descending order and reconstructs A = U Σ Vᵀ with orthonormal U, V", () => {
    // Derived (definition of the SVD).
    const next = rng(23);
    for (const [r, c] of shapes) {
      const A = randomMatrix(r, c, next);
      const k = Math.min(r, c);
      const s = new Float64Array(k), U = new Float64Array(r * k), V = new Float64Array(c * k);
      svdInto(A, r, c, s, U, V);
      for (let i = 1; i < k; i++) expect(s[i - 1]!).toBeGreaterThanOrEqual(s[i]!);
      const Um = toRows(U, r, k), Vm = toRows(V, c, k);
      const US = Um.map((row) => row.map((x, j) => x * s[j]!));
      expect(maxAbsDiff((multiply(US, transpose(Vm)) as number[][]).flat(), A)).toBeLessThan(1e-13);
      const I = (multiply(transpose(Um), Um) as number[][]).flat();
      const Ik = toRows(new Float64Array(k * k).map((_, i) => (i % (k + 1) === 0 ? 1 : 0)), k, k).flat();
      expect(maxAbsDiff(I, Ik)).toBeLessThan(1e-13);
      expect(maxAbsDiff((multiply(transpose(Vm), Vm) as number[][]).flat(), Ik)).toBeLessThan(1e-13);
    }
  });

  it("finds a zero singular value of a rank-deficient matrix", () => {
    // Derived: the third row is the sum of the first two.
    const A = new Float64Array([1, 2, 3, 4, 0.5, -1, 2, 0, 1.5, 1, 5, 4]);
    const s = singularValues(A, 3, 4);
    expect(s[2]).toBeLessThan(1e-14);
    expect(maxAbsDiff(s, mlSingularValues(A, 3, 4))).toBeLessThan(1e-12);
  });

  it("reproduces the METHODS.md ARM-6 singular values at q_A", () => {
    // METHODS.md §3 [CALC] — secondary; ml-matrix above is primary.
    const s = singularValues(geometricJacobian(arm6, qA), 6, 6);
    expect(maxAbsDiff(s, [1.804711, 1.620296, 0.730147, 0.296709, 0.260934, 0.215991])).toBeLessThan(1e-6);
  });
});

describe("symmetricEigenInto (cyclic Jacobi)", () => {
  it("agrees with mathjs eigs on random symmetric matrices", () => {
    // Reference library: mathjs.
    const next = rng(31);
    for (const n of [3, 6, 7]) {
      const B = randomMatrix(n, n, next);
      const S = toRows(B, n, n).map((row, i) => row.map((_, j) => B[i * n + j]! + B[j * n + i]!));
      const values = new Float64Array(n), vectors = new Float64Array(n * n);
      symmetricEigenInto(S.flat(), n, values, vectors);
      const ref = [...(eigs(S).values as number[])].sort((a, b) => b - a);
      expect(maxAbsDiff(values, ref)).toBeLessThan(1e-12);
      // S v = λ v for each column (derived).
      for (let c = 0; c < n; c++) {
        const v = Array.from({ length: n }, (_, r) => vectors[r * n + c]!);
        const Sv = multiply(S, v) as number[];
        expect(maxAbsDiff(Sv, v.map((x) => x * values[c]!))).toBeLessThan(1e-12);
      }
    }
  });
});

describe("manipulability", () => {
  it("equals |det J| for a square J", () => {
    // Yoshikawa 1985 ("when m = n … w reduces to |det J|"); determinant by mathjs.
    const J = geometricJacobian(arm6, qA);
    expect(manipulability(J, 6, 6)).toBeCloseTo(Math.abs(det(toRows(J, 6, 6))), 14);
    expect(manipulability(J, 6, 6)).toBeCloseTo(0.035703441, 9); // METHODS.md §3 [CALC], secondary
  });

  it("equals sqrt(det(J Jᵀ)) for a wide J (3 x 6 position rows)", () => {
    // Yoshikawa 1985 definition; determinant by mathjs. Secondary: 0.071811777 (METHODS.md §3 [CALC]).
    const J = geometricJacobian(arm6, qA).slice(0, 18);
    const M = toRows(J, 3, 6);
    expect(manipulability(J, 3, 6)).toBeCloseTo(Math.sqrt(det(multiply(M, transpose(M)) as number[][])), 13);
    expect(manipulability(J, 3, 6)).toBeCloseTo(0.071811777, 9);
  });

  it("is l1·l2·|sin q2| for the two-link planar arm", () => {
    // Yoshikawa 1985, sect. 3.1 (from memory, METHODS.md §3 [MEM]); the 2x2 planar block of J.
    for (const q2 of [-2, -0.5, 0.3, 1.2, Math.PI / 2]) {
      const J = geometricJacobian(planar2R(0.4, 0.3), [0.2, q2]).slice(0, 4);
      expect(manipulability(J, 2, 2)).toBeCloseTo(0.4 * 0.3 * Math.abs(Math.sin(q2)), 14);
    }
  });

  it("is 0 for a tall J, where J Jᵀ is rank-deficient", () => {
    // Derived from the definition sqrt(det(J Jᵀ)).
    const J = geometricJacobian(planar2R(), [0.2, 0.5]);
    expect(manipulability(J, 6, 2)).toBe(0);
  });
});
