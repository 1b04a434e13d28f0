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
    const src = 16 * i, dst = src + 16;
    if (!modified) {
      for (let r = 0; r < 12; r += 4) {
        const t0 = F[src + r]!, t1 = F[src + r + 1]!, t2 = F[src + r + 2]!, t3 = F[src + r + 3]!;
        const u = t0 * ct + t1 * st;
        const w = t1 * ct - t0 * st;
        F[dst + r] = u;
        F[dst + r + 1] = w * ca + t2 * sa;
        F[dst + r + 2] = t2 * ca - w * sa;
        F[dst + r + 3] = a * u + d * t2 + t3;
      }
    } else {
      for (let r = 0; r < 12; r += 4) {
        const t0 = F[src + r]!, t1 = F[src + r + 1]!, t2 = F[src + r + 2]!, t3 = F[src + r + 3]!;
        const m = t1 * ca + t2 * sa;
        const c2 = t2 * ca - t1 * sa;
        F[dst + r] = t0 * ct + st * m;
        F[dst + r + 1] = ct * m - t0 * st;
        F[dst + r + 2] = c2;
        F[dst + r + 3] = a * t0 + d * c2 + t3;
      }
    }
    F[dst + 12] = 0; F[dst + 13] = 0; F[dst + 14] = 0; F[dst + 15] = 1;
  }
  const tool = kernel.tool;
  const o = 16 * n;
  if (tool) {
    for (let r = 0; r < 12; r += 4) {
      const t0 = F[o + r]!, t1 = F[o + r + 1]!, t2 = F[o + r + 2]!, t3 = F[o + r + 3]!;
      out[r] = t0 * tool[0]! + t1 * tool[4]! + t2 * tool[8]!;
      out[r + 1] = t0 * tool[1]! + t1 * tool[5]! + t2 * tool[9]!;
      out[r + 2] = t0 * tool[2]! + t1 * tool[6]! + t2 * tool[10]!;
      out[r + 3] = t0 * tool[3]! + t1 * tool[7]! + t2 * tool[11]! + t3;
    }
    out[12] = 0; out[13] = 0; out[14] = 0; out[15] = 1;
  } else {
    for (let i = 0; i < 16; i++) out[i] = F[o + i]!;
  }
  return out;
}

/** TCP pose in the world frame, 16 numbers row-major. Validates its inputs (throws KinematicsInputError). */
export function forwardPose(arm: ArmModel, q: ArrayLike<number>): Float64Array {
  const kernel = compileArm(arm);
  requireJointVector(q, kernel.n);
  return forwardPoseInto(kernel, q, new Float64Array(16));
}
