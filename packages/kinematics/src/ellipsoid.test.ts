import { describe, expect, it } from "vitest";
import { Matrix, SingularValueDecomposition } from "ml-matrix";
import { geometricJacobian, velocityEllipsoid } from "./index.ts";
import { arm6, maxAbsDiff, planar2R, qA, toRows } from "./test-fixtures.ts";

describe("velocityEllipsoid", () => {
  it("has semi-axis lengths equal to the singular values of J_P and orthonormal axes that are eigenvectors of J_P J_Pᵀ", () => {
    // Yoshikawa 1985 (velocity ellipsoid); singular values by ml-matrix; eigenvector property derived.
    const J = geometricJacobian(arm6, qA);
    const e = velocityEllipsoid(J, 6, 6, "linear");
    const JP = toRows(J, 6, 6).slice(0, 3);
    const s = new SingularValueDecomposition(new Matrix(JP), { autoTranspose: true }).diagonal;
    expect(maxAbsDiff(e.lengths, [...s].sort((a, b) => b - a))).toBeLessThan(1e-12);
    const G = new Matrix(JP).mmul(new Matrix(JP).transpose());
    for (let i = 0; i < 3; i++) {
      const a = Array.from(e.axes.slice(3 * i, 3 * i + 3));
      expect(Math.hypot(...a)).toBeCloseTo(1, 14);
      const Ga = G.mmul(Matrix.columnVector(a)).to1DArray();
      expect(maxAbsDiff(Ga, a.map((x) => x * e.lengths[i]! ** 2))).toBeLessThan(1e-12);
    }
    expect(e.manipulability).toBeCloseTo(0.071811777, 9); // METHODS.md §3 [CALC], secondary
  });

  it("collapses to a flat ellipse for the planar arm and to a segment when it is stretched out", () => {
    // Derived: a planar arm cannot move along z; stretched out it can only move across the links.
    const flat = velocityEllipsoid(geometricJacobian(planar2R(), [0.3, 1.0]), 6, 2);
    expect(flat.lengths[2]).toBeLessThan(1e-15);
    const stretched = velocityEllipsoid(geometricJacobian(planar2R(), [0.3, 0]), 6, 2);
    expect(stretched.lengths[1]).toBeLessThan(1e-15);
    expect(Math.abs(stretched.axes[0]! * Math.cos(0.3) + stretched.axes[1]! * Math.sin(0.3))).toBeLessThan(1e-12);
  });

  it("gives the angular ellipsoid from rows 3–5", () => {
    // Derived, singular values by ml-matrix.
    const J = geometricJacobian(arm6, qA);
    const e = velocityEllipsoid(J, 6, 6, "angular");
    const s = new SingularValueDecomposition(new Matrix(toRows(J, 6, 6).slice(3)), { autoTranspose: true }).diagonal;
    expect(maxAbsDiff(e.lengths, [...s].sort((a, b) => b - a))).toBeLessThan(1e-12);
  });
});
