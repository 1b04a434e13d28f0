/**
 * Geometric Jacobian, 6 x n row-major, rows [vx, vy, vz, wx, wy, wz], world frame, reference point = TCP
 * (PRODUCT.md "Conventions"; Siciliano et al. 2009, sect. 3.1):
 *   revolute joint:  column = [ z × (p_tcp − p) ; z ]
 *   prismatic joint: column = [ z ; 0 ]
 * with z, p the joint axis and a point on it. Standard DH: joint i turns about z_{i-1} of frame i−1;
 * modified DH (Craig 1986): about z_i of frame i. Units: m/s per rad/s (or per m/s) and rad/s per rad/s.
 */

import type { ArmKernel, ArmModel } from "./arm.ts";
import { compileArm, requireJointVector } from "./arm.ts";
import { gramInto } from "./cholesky.ts";
import { forwardPoseInto } from "./pose.ts";

const poseScratch = new Float64Array(16);

/**
 * Writes J (6·n numbers) into `out` and, when given, the TCP pose into `outPose`. Allocation-free;
 * q is not validated (hot path). Returns `out`.
 */
export function geometricJacobianInto(
  kernel: ArmKernel, q: ArrayLike<number>, out: Float64Array, outPose: Float64Array = poseScratch,
): Float64Array {
  forwardPoseInto(kernel, q, outPose);
  const n = kernel.n;
  const F = kernel.frames;
  const px = outPose[3]!, py = outPose[7]!, pz = outPose[11]!;
  const shift = kernel.modified ? 1 : 0;
  for (let i = 0; i < n; i++) {
    const f = 16 * (i + shift);
    // z axis = third column of the rotation, origin = translation column.
    const zx = F[f + 2]!, zy = F[f + 6]!, zz = F[f + 10]!;
    if (kernel.prismatic[i] === 1) {
      out[i] = zx; out[n + i] = zy; out[2 * n + i] = zz;
      out[3 * n + i] = 0; out[4 * n + i] = 0; out[5 * n + i] = 0;
    } else {
      const rx = px - F[f + 3]!, ry = py - F[f + 7]!, rz = pz - F[f + 11]!;
      out[i] = zy * rz - zz * ry;
      out[n + i] = zz * rx - zx * rz;
      out[2 * n + i] = zx * ry - zy * rx;
      out[3 * n + i] = zx; out[4 * n + i] = zy; out[5 * n + i] = zz;
    }
  }
  return out;
}

/** Geometric Jacobian (6·n numbers, row-major). Validates its inputs (throws KinematicsInputError). */
export function geometricJacobian(arm: ArmModel, q: ArrayLike<number>): Float64Array {
  const kernel = compileArm(arm);
  requireJointVector(q, kernel.n);
  return geometricJacobianInto(kernel, q, new Float64Array(6 * kernel.n));
}

/**
 * The control step's fused pass (not exported from index.ts): J (6·n), the TCP pose and the Gram matrix
 * G = gramInto(J, 6, n, outG) in one go. The forward kinematics is forwardPoseInto's, with the same
 * arithmetic, but only each joint's axis z and point p are kept (z straight into the angular rows of J, p
 * parked in the linear rows until the TCP is known), so kernel.frames is not written and nothing is read
 * back. For n ≥ 6 the 21 distinct Gram sums are accumulated while the columns are filled, column by column
 * in gram6Into's order. Every number is computed by the same operations in the same order as
 * geometricJacobianInto followed by gramInto, so J, pose and G are bit-identical (derived; checked on jog
 * paths of both demo arms). Allocation-free; q is not validated.
 */
export function jacobianPoseGramInto(
  kernel: ArmKernel, q: ArrayLike<number>, J: Float64Array, pose: Float64Array, G: Float64Array,
): void {
  const n = kernel.n;
  const n2 = 2 * n, n3 = 3 * n, n4 = 4 * n, n5 = 5 * n;
  const base = kernel.base;
  let t00 = 1, t01 = 0, t02 = 0, t03 = 0;
  let t10 = 0, t11 = 1, t12 = 0, t13 = 0;
  let t20 = 0, t21 = 0, t22 = 1, t23 = 0;
  if (base) {
    t00 = base[0]!; t01 = base[1]!; t02 = base[2]!; t03 = base[3]!;
    t10 = base[4]!; t11 = base[5]!; t12 = base[6]!; t13 = base[7]!;
    t20 = base[8]!; t21 = base[9]!; t22 = base[10]!; t23 = base[11]!;
  }
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
      // Joint i turns about z of frame i−1: the transform before this link.
      J[i] = t03; J[n + i] = t13; J[n2 + i] = t23;
      J[n3 + i] = t02; J[n4 + i] = t12; J[n5 + i] = t22;
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
      // Joint i turns about z of frame i: the transform after this link.
      J[i] = t03; J[n + i] = t13; J[n2 + i] = t23;
      J[n3 + i] = t02; J[n4 + i] = t12; J[n5 + i] = t22;
    }
  }
  let px: number, py: number, pz: number;
  const tool = kernel.tool;
  if (tool) {
    const m00 = tool[0]!, m01 = tool[1]!, m02 = tool[2]!, m03 = tool[3]!;
    const m10 = tool[4]!, m11 = tool[5]!, m12 = tool[6]!, m13 = tool[7]!;
    const m20 = tool[8]!, m21 = tool[9]!, m22 = tool[10]!, m23 = tool[11]!;
    pose[0] = t00 * m00 + t01 * m10 + t02 * m20;
    pose[1] = t00 * m01 + t01 * m11 + t02 * m21;
    pose[2] = t00 * m02 + t01 * m12 + t02 * m22;
    px = t00 * m03 + t01 * m13 + t02 * m23 + t03;
    pose[4] = t10 * m00 + t11 * m10 + t12 * m20;
    pose[5] = t10 * m01 + t11 * m11 + t12 * m21;
    pose[6] = t10 * m02 + t11 * m12 + t12 * m22;
    py = t10 * m03 + t11 * m13 + t12 * m23 + t13;
    pose[8] = t20 * m00 + t21 * m10 + t22 * m20;
    pose[9] = t20 * m01 + t21 * m11 + t22 * m21;
    pose[10] = t20 * m02 + t21 * m12 + t22 * m22;
    pz = t20 * m03 + t21 * m13 + t22 * m23 + t23;
  } else {
    pose[0] = t00; pose[1] = t01; pose[2] = t02;
    pose[4] = t10; pose[5] = t11; pose[6] = t12;
    pose[8] = t20; pose[9] = t21; pose[10] = t22;
    px = t03; py = t13; pz = t23;
  }
  pose[3] = px; pose[7] = py; pose[11] = pz;
  pose[12] = 0; pose[13] = 0; pose[14] = 0; pose[15] = 1;
  if (n < 6) {
    // Linear rows from the parked points, then the general Gram product.
    for (let i = 0; i < n; i++) {
      const zx = J[n3 + i]!, zy = J[n4 + i]!, zz = J[n5 + i]!;
      if (PR[i] === 1) {
        J[i] = zx; J[n + i] = zy; J[n2 + i] = zz;
        J[n3 + i] = 0; J[n4 + i] = 0; J[n5 + i] = 0;
      } else {
        const rx = px - J[i]!, ry = py - J[n + i]!, rz = pz - J[n2 + i]!;
        J[i] = zy * rz - zz * ry;
        J[n + i] = zz * rx - zx * rz;
        J[n2 + i] = zx * ry - zy * rx;
      }
    }
    gramInto(J, 6, n, G);
    return;
  }
  let s00 = 0, s10 = 0, s11 = 0, s20 = 0, s21 = 0, s22 = 0, s30 = 0, s31 = 0, s32 = 0, s33 = 0;
  let s40 = 0, s41 = 0, s42 = 0, s43 = 0, s44 = 0, s50 = 0, s51 = 0, s52 = 0, s53 = 0, s54 = 0, s55 = 0;
  for (let c = 0; c < n; c++) {
    let j0: number, j1: number, j2: number, j3: number, j4: number, j5: number;
    const zx = J[n3 + c]!, zy = J[n4 + c]!, zz = J[n5 + c]!;
    if (PR[c] === 1) {
      j0 = zx; j1 = zy; j2 = zz; j3 = 0; j4 = 0; j5 = 0;
      J[n3 + c] = 0; J[n4 + c] = 0; J[n5 + c] = 0;
    } else {
      const rx = px - J[c]!, ry = py - J[n + c]!, rz = pz - J[n2 + c]!;
      j0 = zy * rz - zz * ry;
      j1 = zz * rx - zx * rz;
      j2 = zx * ry - zy * rx;
      j3 = zx; j4 = zy; j5 = zz;
    }
    J[c] = j0; J[n + c] = j1; J[n2 + c] = j2;
    s00 += j0 * j0;
    s10 += j0 * j1; s11 += j1 * j1;
    s20 += j0 * j2; s21 += j1 * j2; s22 += j2 * j2;
    s30 += j0 * j3; s31 += j1 * j3; s32 += j2 * j3; s33 += j3 * j3;
    s40 += j0 * j4; s41 += j1 * j4; s42 += j2 * j4; s43 += j3 * j4; s44 += j4 * j4;
    s50 += j0 * j5; s51 += j1 * j5; s52 += j2 * j5; s53 += j3 * j5; s54 += j4 * j5; s55 += j5 * j5;
  }
  G[0] = s00; G[1] = s10; G[2] = s20; G[3] = s30; G[4] = s40; G[5] = s50;
  G[6] = s10; G[7] = s11; G[8] = s21; G[9] = s31; G[10] = s41; G[11] = s51;
  G[12] = s20; G[13] = s21; G[14] = s22; G[15] = s32; G[16] = s42; G[17] = s52;
  G[18] = s30; G[19] = s31; G[20] = s32; G[21] = s33; G[22] = s43; G[23] = s53;
  G[24] = s40; G[25] = s41; G[26] = s42; G[27] = s43; G[28] = s44; G[29] = s54;
  G[30] = s50; G[31] = s51; G[32] = s52; G[33] = s53; G[34] = s54; G[35] = s55;
}
