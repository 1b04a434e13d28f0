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
