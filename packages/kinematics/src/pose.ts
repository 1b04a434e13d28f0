/**
 * Forward kinematics: the TCP pose in the world frame, Pose = base · link_1 · … · link_n · tool
 * (PRODUCT.md "Conventions"). Units: metres, radians. Poses are 4x4 homogeneous, row-major.
 */

import type { ArmKernel, ArmModel } from "./arm.ts";
import { compileArm, requireJointVector } from "./arm.ts";

/**
 * out[o..] = A[ao..] · B[bo..] for homogeneous transforms (last row 0 0 0 1 assumed, written explicitly).
 * `out` must not overlap A or B.
 */
export function multiplyTransformInto(
  out: Float64Array, o: number, A: ArrayLike<number>, ao: number, B: ArrayLike<number>, bo: number,
): void {
  for (let r = 0; r < 3; r++) {
    const a0 = A[ao + 4 * r]!, a1 = A[ao + 4 * r + 1]!, a2 = A[ao + 4 * r + 2]!, a3 = A[ao + 4 * r + 3]!;
    out[o + 4 * r] = a0 * B[bo]! + a1 * B[bo + 4]! + a2 * B[bo + 8]!;
    out[o + 4 * r + 1] = a0 * B[bo + 1]! + a1 * B[bo + 5]! + a2 * B[bo + 9]!;
    out[o + 4 * r + 2] = a0 * B[bo + 2]! + a1 * B[bo + 6]! + a2 * B[bo + 10]!;
    out[o + 4 * r + 3] = a0 * B[bo + 3]! + a1 * B[bo + 7]! + a2 * B[bo + 11]! + a3;
  }
  out[o + 12] = 0; out[o + 13] = 0; out[o + 14] = 0; out[o + 15] = 1;
}

function setIdentity(out: Float64Array, o: number): void {
  for (let i = 0; i < 16; i++) out[o + i] = 0;
  out[o] = 1; out[o + 5] = 1; out[o + 10] = 1; out[o + 15] = 1;
}

/**
 * Computes world-from-frame-i for i = 0..n into kernel.frames (frame 0 = base) and the TCP pose into
 * `out` (16 numbers). Allocation-free; q is not validated (hot path). Returns `out`.
 *
 * Each product T_i = T_{i-1}·A_i is expanded for the sparse DH matrix A_i of dh.ts (derived; 12 flops a
 * row instead of a general 4x4 product; checked against the explicit link matrices in pose.test.ts).
 * Standard DH, row (t0 t1 t2 t3) of T_{i-1}:  u = t0·cθ + t1·sθ,  w = −t0·sθ + t1·cθ,
 *   → (u,  w·cα + t2·sα,  −w·sα + t2·cα,  a·u + d·t2 + t3)
 * Modified DH:  m = t1·cα + t2·sα,  c2 = −t1·sα + t2·cα,
 *   → (t0·cθ + sθ·m,  −t0·sθ + cθ·m,  c2,  a·t0 + d·c2 + t3)
 */
export function forwardPoseInto(kernel: ArmKernel, q: ArrayLike<number>, out: Float64Array): Float64Array {
  const F = kernel.frames;
  const n = kernel.n;
  const base = kernel.base;
  if (base) for (let i = 0; i < 16; i++) F[i] = base[i]!;
  else setIdentity(F, 0);
  // The running transform T_i (top 3x4; the last row stays 0 0 0 1) is kept in locals and stored into
  // kernel.frames once per link, so no entry is read back from memory (same arithmetic as before).
  let t00 = F[0]!, t01 = F[1]!, t02 = F[2]!, t03 = F[3]!;
  let t10 = F[4]!, t11 = F[5]!, t12 = F[6]!, t13 = F[7]!;
  let t20 = F[8]!, t21 = F[9]!, t22 = F[10]!, t23 = F[11]!;
  const modified = kernel.modified;
  const A = kernel.a, D = kernel.d, TH = kernel.theta, CA = kernel.cosAlpha, SA = kernel.sinAlpha;
  const PR = kernel.prismatic;
  for (let i = 0; i < n; i++) {
    const qi = q[i]!;
    const pr = PR[i] === 1;
    const theta = pr ? TH[i]! : TH[i]! + qi;
    const d = pr ? D[i]! + qi : D[i]!;
    const a = A[i]!, ca = CA[i]!, sa = SA[i]!;
    const ct = Math.cos(theta), st = Math.sin(theta);
    if (!modified) {
      const u0 = t00 * ct + t01 * st, w0 = t01 * ct - t00 * st;
      const u1 = t10 * ct + t11 * st, w1 = t11 * ct - t10 * st;
      const u2 = t20 * ct + t21 * st, w2 = t21 * ct - t20 * st;
      t03 = a * u0 + d * t02 + t03; t13 = a * u1 + d * t12 + t13; t23 = a * u2 + d * t22 + t23;
      t00 = u0; t10 = u1; t20 = u2;
      t01 = w0 * ca + t02 * sa; t11 = w1 * ca + t12 * sa; t21 = w2 * ca + t22 * sa;
      t02 = t02 * ca - w0 * sa; t12 = t12 * ca - w1 * sa; t22 = t22 * ca - w2 * sa;
    } else {
      const m0 = t01 * ca + t02 * sa, k0 = t02 * ca - t01 * sa;
      const m1 = t11 * ca + t12 * sa, k1 = t12 * ca - t11 * sa;
      const m2 = t21 * ca + t22 * sa, k2 = t22 * ca - t21 * sa;
      t03 = a * t00 + d * k0 + t03; t13 = a * t10 + d * k1 + t13; t23 = a * t20 + d * k2 + t23;
      t01 = ct * m0 - t00 * st; t11 = ct * m1 - t10 * st; t21 = ct * m2 - t20 * st;
      t00 = t00 * ct + st * m0; t10 = t10 * ct + st * m1; t20 = t20 * ct + st * m2;
      t02 = k0; t12 = k1; t22 = k2;
    }
    const o = 16 * i + 16;
    F[o] = t00; F[o + 1] = t01; F[o + 2] = t02; F[o + 3] = t03;
    F[o + 4] = t10; F[o + 5] = t11; F[o + 6] = t12; F[o + 7] = t13;
    F[o + 8] = t20; F[o + 9] = t21; F[o + 10] = t22; F[o + 11] = t23;
    F[o + 12] = 0; F[o + 13] = 0; F[o + 14] = 0; F[o + 15] = 1;
  }
  const tool = kernel.tool;
  if (tool) {
    const m00 = tool[0]!, m01 = tool[1]!, m02 = tool[2]!, m03 = tool[3]!;
    const m10 = tool[4]!, m11 = tool[5]!, m12 = tool[6]!, m13 = tool[7]!;
    const m20 = tool[8]!, m21 = tool[9]!, m22 = tool[10]!, m23 = tool[11]!;
    out[0] = t00 * m00 + t01 * m10 + t02 * m20;
    out[1] = t00 * m01 + t01 * m11 + t02 * m21;
    out[2] = t00 * m02 + t01 * m12 + t02 * m22;
    out[3] = t00 * m03 + t01 * m13 + t02 * m23 + t03;
    out[4] = t10 * m00 + t11 * m10 + t12 * m20;
    out[5] = t10 * m01 + t11 * m11 + t12 * m21;
    out[6] = t10 * m02 + t11 * m12 + t12 * m22;
    out[7] = t10 * m03 + t11 * m13 + t12 * m23 + t13;
    out[8] = t20 * m00 + t21 * m10 + t22 * m20;
    out[9] = t20 * m01 + t21 * m11 + t22 * m21;
    out[10] = t20 * m02 + t21 * m12 + t22 * m22;
    out[11] = t20 * m03 + t21 * m13 + t22 * m23 + t23;
  } else {
    out[0] = t00; out[1] = t01; out[2] = t02; out[3] = t03;
    out[4] = t10; out[5] = t11; out[6] = t12; out[7] = t13;
    out[8] = t20; out[9] = t21; out[10] = t22; out[11] = t23;
  }
  out[12] = 0; out[13] = 0; out[14] = 0; out[15] = 1;
  return out;
}

/** TCP pose in the world frame, 16 numbers row-major. Validates its inputs (throws KinematicsInputError). */
export function forwardPose(arm: ArmModel, q: ArrayLike<number>): Float64Array {
  const kernel = compileArm(arm);
  requireJointVector(q, kernel.n);
  return forwardPoseInto(kernel, q, new Float64Array(16));
}
