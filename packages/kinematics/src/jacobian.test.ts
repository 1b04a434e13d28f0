import { describe, expect, it } from "vitest";
import { det } from "mathjs";
import { compileArm, demoArms, forwardPose, forwardPoseInto, geometricJacobian, geometricJacobianInto, gramInto, singularValues } from "./index.ts";
import type { ArmModel } from "./index.ts";
import { jacobianPoseGramInto } from "./jacobian.ts";
import { anthropomorphic3R, arm6, matVec, maxAbsDiff, mixedArm, norm, planar2R, qA, rng, toRows } from "./test-fixtures.ts";

/** Central finite difference of forwardPose: linear part d p/dq_i, angular part vee(dR/dq_i · Rᵀ). */
function finiteDifferenceJacobian(arm: ArmModel, q: number[], h: number): Float64Array {
  const n = q.length;
  const J = new Float64Array(6 * n);
  const R = forwardPose(arm, q);
  for (let i = 0; i < n; i++) {
    const qp = [...q], qm = [...q];
    qp[i] = qp[i]! + h;
    qm[i] = qm[i]! - h;
    const Tp = forwardPose(arm, qp), Tm = forwardPose(arm, qm);
    J[i] = (Tp[3]! - Tm[3]!) / (2 * h);
    J[n + i] = (Tp[7]! - Tm[7]!) / (2 * h);
    J[2 * n + i] = (Tp[11]! - Tm[11]!) / (2 * h);
    // S = dR · Rᵀ is skew-symmetric; ω = (S21, S02, S10).
    const S = (r: number, c: number) => {
      let s = 0;
      for (let k = 0; k < 3; k++) s += ((Tp[4 * r + k]! - Tm[4 * r + k]!) / (2 * h)) * R[4 * c + k]!;
      return s;
    };
    J[3 * n + i] = S(2, 1);
    J[4 * n + i] = S(0, 2);
    J[5 * n + i] = S(1, 0);
  }
  return J;
}

function block(J: ArrayLike<number>, cols: number, rows: number[], colsSel: number[]): number[][] {
  return rows.map((r) => colsSel.map((c) => J[r * cols + c]!));
}

function withTool(arm: ArmModel, dz: number): ArmModel {
  return { ...arm, tool: [1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1, dz, 0, 0, 0, 1] };
}

describe("geometricJacobian", () => {
  it("matches a central finite difference of forwardPose for standard and modified DH with prismatic joints", () => {
    // Derived (METHODS.md §5 suggests tolerance 1e-8 with h = 1e-5).
    const next = rng(3);
    const arms = [mixedArm("standard"), mixedArm("modified"), arm6, ...demoArms.map((d) => d.model)];
    for (const arm of arms) {
      for (let trial = 0; trial < 5; trial++) {
        const q = arm.joints.map(() => 2 * next() - 1);
        const J = geometricJacobian(arm, q);
        expect(maxAbsDiff(J, finiteDifferenceJacobian(arm, q, 1e-5))).toBeLessThan(1e-8);
      }
    }
  });

  it("gives a prismatic column [z; 0]", () => {
    // Siciliano et al. 2009, sect. 3.1 (prismatic joint column).
    const arm = mixedArm("modified");
    const J = geometricJacobian(arm, [0.1, 0.2, 0.3, 0.4, 0.5, 0.05, 0.7]);
    const n = 7;
    const col = [0, 1, 2, 3, 4, 5].map((r) => J[r * n + 1]!);
    expect(norm(col.slice(0, 3))).toBeCloseTo(1, 14);
    expect(norm(col.slice(3))).toBe(0);
  });

  it("has det J = a1·a2·sin(q2) for the planar 2R arm", () => {
    // Siciliano et al. 2009, ch. 3 (two-link planar arm); determinant by mathjs (reference library).
    const next = rng(5);
    for (let trial = 0; trial < 10; trial++) {
      const q = [4 * next() - 2, 4 * next() - 2];
      const J = geometricJacobian(planar2R(0.4, 0.3), q);
      const d = det(block(J, 2, [0, 1], [0, 1]));
      expect(d).toBeCloseTo(0.4 * 0.3 * Math.sin(q[1]!), 14);
    }
    // METHODS.md §4 [CALC], secondary: θ = (0.3, 0.7) → 0.0773061225
    expect(det(block(geometricJacobian(planar2R(), [0.3, 0.7]), 2, [0, 1], [0, 1]))).toBeCloseTo(0.0773061225, 9);
  });

  it("has det J_P = −a2·a3·s3·(a2·c2 + a3·c23) for the anthropomorphic 3R arm", () => {
    // Siciliano et al. 2009, ch. 3 (anthropomorphic arm singularities); determinant by mathjs.
    const next = rng(9);
    for (let trial = 0; trial < 10; trial++) {
      const q = [4 * next() - 2, 4 * next() - 2, 4 * next() - 2];
      const J = geometricJacobian(anthropomorphic3R(0.4, 0.35), q);
      const expected = -0.4 * 0.35 * Math.sin(q[2]!) * (0.4 * Math.cos(q[1]!) + 0.35 * Math.cos(q[1]! + q[2]!));
      expect(det(block(J, 3, [0, 1, 2], [0, 1, 2]))).toBeCloseTo(expected, 14);
    }
  });

  it("decouples at the wrist centre: upper-right block zero and det J = det J11 · det J22", () => {
    // Siciliano et al. 2009, sect. 3.3.1 (singularity decoupling); determinants by mathjs.
    const wristCentre = withTool(arm6, -0.08); // TCP moved back from the flange to the wrist centre
    const next = rng(13);
    for (let trial = 0; trial < 5; trial++) {
      const q = arm6.joints.map(() => 3 * next() - 1.5);
      const J = geometricJacobian(wristCentre, q);
      expect(maxAbsDiff(block(J, 6, [0, 1, 2], [3, 4, 5]).flat(), new Array(9).fill(0))).toBeLessThan(1e-15);
      const d11 = det(block(J, 6, [0, 1, 2], [0, 1, 2]));
      const d22 = det(block(J, 6, [3, 4, 5], [3, 4, 5]));
      expect(det(toRows(J, 6, 6))).toBeCloseTo(d11 * d22, 13);
      // METHODS.md §4 [CALC] closed form, secondary: det J = −a2·d4·c3·s5·(a2·c2 + d4·s23)
      const [, q2, q3, , q5] = q as [number, number, number, number, number, number];
      const closed = -0.4 * 0.35 * Math.cos(q3) * Math.sin(q5) * (0.4 * Math.cos(q2) + 0.35 * Math.sin(q2 + q3));
      expect(det(toRows(J, 6, 6))).toBeCloseTo(closed, 12);
    }
  });

  it("keeps det J unchanged when the TCP offset changes, while the singular values change", () => {
    // Derived: moving the reference point multiplies J by [[I, −S(r)], [0, I]], determinant 1
    // (METHODS.md §3). Determinants by mathjs. Secondary [CALC]: −0.035703441 and σ6 = 0.220616,
    // 0.215991, 0.205174 at the wrist centre, flange and 0.15 m TCP.
    const dets: number[] = [];
    const sigma6: number[] = [];
    for (const dz of [-0.08, 0, 0.15]) {
      const J = geometricJacobian(withTool(arm6, dz), qA);
      dets.push(det(toRows(J, 6, 6)));
      sigma6.push(singularValues(J, 6, 6)[5]!);
    }
    expect(dets[1]).toBeCloseTo(dets[0]!, 14);
    expect(dets[2]).toBeCloseTo(dets[0]!, 14);
    expect(Math.abs(sigma6[0]! - sigma6[2]!)).toBeGreaterThan(0.01);
    expect(dets[0]).toBeCloseTo(-0.035703441, 9);
    expect(sigma6[0]).toBeCloseTo(0.220616, 6);
    expect(sigma6[1]).toBeCloseTo(0.215991, 6);
    expect(sigma6[2]).toBeCloseTo(0.205174, 6);
  });

  it("at a wrist singularity (θ5 = 0 or π) has joints 4 and 6 collinear, and turning them oppositely leaves the tool still", () => {
    // Textbook fact (Siciliano et al. 2009, sect. 3.3.2; PRODUCT.md check values).
    for (const [q5, sign] of [[0, 1], [Math.PI, -1]] as const) {
      const q = [0.1, 0.5, -0.4, 0.3, q5, -0.2];
      const J = geometricJacobian(arm6, q);
      const z4 = [3, 4, 5].map((r) => J[r * 6 + 3]!);
      const z6 = [3, 4, 5].map((r) => J[r * 6 + 5]!);
      expect(z4[0]! * z6[0]! + z4[1]! * z6[1]! + z4[2]! * z6[2]!).toBeCloseTo(sign, 14);
      // Opposite rotation of joints 4 and 6 (about the common line) gives zero twist.
      const tw = matVec(J, 6, 6, [0, 0, 0, 1, 0, -sign]);
      expect(norm(tw)).toBeLessThan(1e-15);
      expect(singularValues(J, 6, 6)[5]).toBeLessThan(1e-14);
    }
  });

  it("finds the six-axis demo arm singular at all-zero joints and regular at its ready pose", () => {
    // PRODUCT.md "Demo scenario": at all-zero joints joint 5 = 0 (wrist singularity).
    const demo = demoArms[0]!;
    expect(singularValues(geometricJacobian(demo.model, [0, 0, 0, 0, 0, 0]), 6, 6)[5]).toBeLessThan(1e-14);
    expect(singularValues(geometricJacobian(demo.model, demo.readyPose), 6, 6)[5]).toBeGreaterThan(0.1);
  });

  it("reproduces the METHODS.md ARM-6 Jacobian at q_A", () => {
    // METHODS.md §5 [CALC] — secondary value (6 decimals); the finite-difference check is primary.
    const expected = [
      [-0.02766, 0.205434, 0.396247, -0.011317, 0.04866, 0],
      [0.445555, 0.020612, 0.039757, -0.056236, -0.011672, 0],
      [0, 0.446091, 0.095057, -0.001693, 0.062418, 0],
      [0, 0.099833, 0.099833, 0.099335, -0.1972, 0.768857],
      [0, -0.995004, -0.995004, 0.009967, -0.979919, -0.135915],
      [1, 0, 0, -0.995004, -0.029503, -0.624809],
    ];
    expect(maxAbsDiff(geometricJacobian(arm6, qA), expected.flat())).toBeLessThan(6e-7);
  });
});

describe("the control step's fused pass", () => {
  it("jacobianPoseGramInto gives forwardPoseInto's pose, geometricJacobianInto's J and gramInto's G, bit for bit", () => {
    // Pinning test (README "Deliberate copies"): jacobianPoseGramInto writes out forwardPoseInto's link
    // products and gram6Into's sums; derived to do the same operations in the same order. Both conventions,
    // prismatic joints, base and tool, n < 6 (gramInto's loop) and n ≥ 6 (the fused Gram sums).
    const arms: ArmModel[] = [...demoArms.map((d) => d.model), arm6, mixedArm("standard"), mixedArm("modified"), planar2R(), anthropomorphic3R()];
    const next = rng(61);
    for (const arm of arms) {
      const kernel = compileArm(arm);
      const n = kernel.n;
      const k = Math.min(6, n);
      const J = new Float64Array(6 * n), pose = new Float64Array(16), G = new Float64Array(k * k);
      const Jref = new Float64Array(6 * n), poseRef = new Float64Array(16), Gref = new Float64Array(k * k), poseFk = new Float64Array(16);
      for (let trial = 0; trial < 300; trial++) {
        const q = arm.joints.map((j) => (j.type === "prismatic" ? 0.3 : 4) * (2 * next() - 1));
        if (trial % 25 === 0) q.fill(0);
        jacobianPoseGramInto(kernel, q, J, pose, G);
        geometricJacobianInto(kernel, q, Jref, poseRef);
        gramInto(Jref, 6, n, Gref);
        forwardPoseInto(kernel, q, poseFk);
        expect(Array.from(J)).toEqual(Array.from(Jref));
        expect(Array.from(pose)).toEqual(Array.from(poseRef));
        expect(Array.from(pose)).toEqual(Array.from(poseFk));
        expect(Array.from(G)).toEqual(Array.from(Gref));
      }
    }
  });
});
