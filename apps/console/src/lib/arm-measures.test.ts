import { describe, expect, it } from "vitest";
import type { ArmModel } from "@jogwright/kinematics";
import { poseMeasures } from "./arm-measures.ts";

// A planar two-link arm (standard DH, α = 0, d = 0): links a1, a2. Its 6×2 geometric Jacobian has the
// linear columns v1, v2 in the plane and 1 in the ωz row of both, so (derived) JᵀJ = [[|v1|²+1, v1·v2+1],
// [v1·v2+1, |v2|²+1]] and det JᵀJ = |v1 × v2|² + |v1 − v2|² = a1²·a2²·sin²q2 + a1².
const a1 = 0.4;
const a2 = 0.3;
const planar2R: ArmModel = {
  convention: "standard",
  joints: [
    { type: "revolute", a: a1, alpha: 0, d: 0, theta: 0 },
    { type: "revolute", a: a2, alpha: 0, d: 0, theta: 0 },
  ],
};

describe("pose measures of an arm, computed in the browser", () => {
  it("the manipulability of an arm with fewer than six joints is √det(JᵀJ), here a1·√(1 + a2²·sin²q2) (derived)", () => {
    expect(poseMeasures(planar2R, [0.3, Math.PI / 2]).manipulability).toBeCloseTo(a1 * Math.sqrt(1 + a2 * a2), 12);
    expect(poseMeasures(planar2R, [0, 0]).manipulability).toBeCloseTo(a1, 12);
  });

  it("σ_min is the smaller root of the 2×2 Gram matrix's characteristic polynomial (derived)", () => {
    const q2 = 0.8;
    const v1 = [-(a1 * Math.sin(0) + a2 * Math.sin(q2)), a1 * Math.cos(0) + a2 * Math.cos(q2)];
    const v2 = [-a2 * Math.sin(q2), a2 * Math.cos(q2)];
    const g11 = v1[0]! ** 2 + v1[1]! ** 2 + 1;
    const g22 = v2[0]! ** 2 + v2[1]! ** 2 + 1;
    const g12 = v1[0]! * v2[0]! + v1[1]! * v2[1]! + 1;
    const tr = g11 + g22;
    const det = g11 * g22 - g12 * g12;
    const lambdaMin = (tr - Math.sqrt(tr * tr - 4 * det)) / 2;
    expect(poseMeasures(planar2R, [0, q2]).sigmaMin).toBeCloseTo(Math.sqrt(lambdaMin), 12);
  });

  it("reads missing joint values as zero, the upload preview's pose", () => {
    expect(poseMeasures(planar2R, [])).toEqual(poseMeasures(planar2R, [0, 0]));
  });
});
