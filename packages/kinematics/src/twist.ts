/**
 * Twists and pose errors. A twist is [vx, vy, vz, wx, wy, wz]: TCP linear velocity [m/s] and angular
 * velocity [rad/s] (PRODUCT.md "Conventions"). Poses are 4x4 row-major homogeneous transforms [m].
 */

import { requireFiniteVector, requireRigidTransform } from "./arm.ts";

/**
 * Rotates a tool-frame twist into the world frame: v_w = R v_t, ω_w = R ω_t with R the TCP rotation of
 * `pose`. The reference point stays the TCP, so no lever-arm term (derived). `out` may be `twistTool`.
 */
export function toolTwistToWorldInto(pose: ArrayLike<number>, twistTool: ArrayLike<number>, out: Float64Array): Float64Array {
  const vx = twistTool[0]!, vy = twistTool[1]!, vz = twistTool[2]!;
  const wx = twistTool[3]!, wy = twistTool[4]!, wz = twistTool[5]!;
  for (let r = 0; r < 3; r++) {
    const r0 = pose[4 * r]!, r1 = pose[4 * r + 1]!, r2 = pose[4 * r + 2]!;
    out[r] = r0 * vx + r1 * vy + r2 * vz;
    out[3 + r] = r0 * wx + r1 * wy + r2 * wz;
  }
  return out;
}

/** Allocating wrapper of toolTwistToWorldInto; validates its inputs. */
export function toolTwistToWorld(pose: ArrayLike<number>, twistTool: ArrayLike<number>): Float64Array {
  requireRigidTransform(pose, "pose");
  requireFiniteVector(twistTool, 6, "twist");
  return toolTwistToWorldInto(pose, twistTool, new Float64Array(6));
}

/**
 * Pose error of `pose` relative to the reference `ref`, world frame, 6 numbers:
 *   e_P = p_ref − p,   e_O = ½ (n × n_ref + s × s_ref + a × a_ref)
 * with n, s, a the rotation columns (Luh, Walker & Paul 1980; Siciliano et al. 2009, sect. 3.7.3 — from
 * memory). e_O = sin(θ)·axis of R_ref Rᵀ, good for the small errors of drift correction.
 */
export function poseErrorInto(pose: ArrayLike<number>, ref: ArrayLike<number>, out: Float64Array): Float64Array {
  out[0] = ref[3]! - pose[3]!;
  out[1] = ref[7]! - pose[7]!;
  out[2] = ref[11]! - pose[11]!;
  let ex = 0, ey = 0, ez = 0;
  for (let c = 0; c < 3; c++) {
    const x = pose[c]!, y = pose[4 + c]!, z = pose[8 + c]!;
    const xr = ref[c]!, yr = ref[4 + c]!, zr = ref[8 + c]!;
    ex += y * zr - z * yr;
    ey += z * xr - x * zr;
    ez += x * yr - y * xr;
  }
  out[3] = 0.5 * ex;
  out[4] = 0.5 * ey;
  out[5] = 0.5 * ez;
  return out;
}

/**
 * Moves a pose by a world-frame twist held for dt: p += v·dt, R ← Rot(ω·dt)·R with the rotation by
 * Rodrigues' formula (exact for constant ω). In place. Allocation-free.
 */
export function advancePoseInPlace(pose: Float64Array, twist: ArrayLike<number>, dt: number): void {
  pose[3] = pose[3]! + twist[0]! * dt;
  pose[7] = pose[7]! + twist[1]! * dt;
  pose[11] = pose[11]! + twist[2]! * dt;
  const wx = twist[3]! * dt, wy = twist[4]! * dt, wz = twist[5]! * dt;
  const th = Math.sqrt(wx * wx + wy * wy + wz * wz);
  if (th === 0) return;
  const kx = wx / th, ky = wy / th, kz = wz / th;
  const c = Math.cos(th), s = Math.sin(th), v = 1 - c;
  // Rodrigues rotation matrix (row-major)
  const m00 = c + kx * kx * v, m01 = kx * ky * v - kz * s, m02 = kx * kz * v + ky * s;
  const m10 = ky * kx * v + kz * s, m11 = c + ky * ky * v, m12 = ky * kz * v - kx * s;
  const m20 = kz * kx * v - ky * s, m21 = kz * ky * v + kx * s, m22 = c + kz * kz * v;
  for (let col = 0; col < 3; col++) {
    const r0 = pose[col]!, r1 = pose[4 + col]!, r2 = pose[8 + col]!;
    pose[col] = m00 * r0 + m01 * r1 + m02 * r2;
    pose[4 + col] = m10 * r0 + m11 * r1 + m12 * r2;
    pose[8 + col] = m20 * r0 + m21 * r1 + m22 * r2;
  }
}
