import { describe, expect, it } from "vitest";
import { advancePoseInPlace, forwardPose, geometricJacobian, poseErrorInto, toolTwistToWorld } from "./index.ts";
import { arm6, matVec, maxAbsDiff, qA } from "./test-fixtures.ts";

describe("toolTwistToWorld", () => {
  it("rotates both parts by the TCP rotation, so a tool-z jog moves along the tool's z axis", () => {
    // Derived: v_w = R·v_t, ω_w = R·ω_t (reference point unchanged).
    const T = forwardPose(arm6, qA);
    const w = toolTwistToWorld(T, [0, 0, 0.1, 0, 0, 0.2]);
    expect(maxAbsDiff(w, [0.1 * T[2]!, 0.1 * T[6]!, 0.1 * T[10]!, 0.2 * T[2]!, 0.2 * T[6]!, 0.2 * T[10]!])).toBeLessThan(1e-15);
  });
});

describe("poseErrorInto and advancePoseInPlace", () => {
  it("give a zero error for equal poses and the rotation vector for a small rotation", () => {
    // Luh, Walker & Paul 1980 / Siciliano et al. 2009 sect. 3.7.3 (from memory): e_O = sin θ·axis.
    const T = forwardPose(arm6, qA);
    const e = new Float64Array(6);
    poseErrorInto(T, T, e);
    expect(Math.max(...Array.from(e, Math.abs))).toBeLessThan(1e-15);
    const R = Float64Array.from(T);
    advancePoseInPlace(R, [0.01, 0, -0.02, 0, 0.3, 0], 0.1); // 0.03 rad about world y
    poseErrorInto(T, R, e);
    expect(maxAbsDiff(e, [0.001, 0, -0.002, 0, Math.sin(0.03), 0])).toBeLessThan(1e-12);
  });

  it("advancing the pose by J·qdot·dt matches the pose at q + qdot·dt to second order", () => {
    // Derived: first-order Taylor expansion of the forward kinematics (geometric Jacobian).
    const qdot = [0.2, -0.1, 0.3, 0.5, -0.4, 0.6];
    const dt = 1e-4;
    const T = forwardPose(arm6, qA);
    advancePoseInPlace(T, matVec(geometricJacobian(arm6, qA), 6, 6, qdot), dt);
    const T1 = forwardPose(arm6, qA.map((q, i) => q + qdot[i]! * dt));
    expect(maxAbsDiff(T, T1)).toBeLessThan(1e-7);
  });
});
