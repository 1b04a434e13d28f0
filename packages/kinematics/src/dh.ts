/**
 * Denavit–Hartenberg link transforms, both conventions.
 *
 * Units: metres, radians. Transforms are 4x4 homogeneous, row-major, 16 numbers.
 * Standard (distal) DH, Denavit & Hartenberg 1955 (as in Siciliano et al. 2009, sect. 2.8):
 *   A_i = Rz(θ_i) Tz(d_i) Tx(a_i) Rx(α_i)
 *       = [ cθ  -sθ·cα   sθ·sα   a·cθ ]
 *         [ sθ   cθ·cα  -cθ·sα   a·sθ ]
 *         [ 0    sα      cα      d    ]
 * Modified (proximal) DH, Craig 1986 (ch. 3): ^{i-1}T_i = Rx(α_{i-1}) Tx(a_{i-1}) Rz(θ_i) Tz(d_i)
 *       = [ cθ       -sθ        0     a      ]
 *         [ sθ·cα    cθ·cα    -sα   -sα·d   ]
 *         [ sθ·sα    cθ·sα     cα    cα·d   ]
 * where the row of joint i carries α_{i-1}, a_{i-1}.
 */

import type { ArmJoint, ArmModel } from "./arm.ts";
import { KinematicsInputError, validateArm } from "./arm.ts";

/** Writes the standard-DH link transform into out[o..o+15]. */
export function standardLinkInto(
  out: Float64Array, o: number, a: number, ca: number, sa: number, d: number, theta: number,
): void {
  const ct = Math.cos(theta);
  const st = Math.sin(theta);
  out[o] = ct; out[o + 1] = -st * ca; out[o + 2] = st * sa; out[o + 3] = a * ct;
  out[o + 4] = st; out[o + 5] = ct * ca; out[o + 6] = -ct * sa; out[o + 7] = a * st;
  out[o + 8] = 0; out[o + 9] = sa; out[o + 10] = ca; out[o + 11] = d;
  out[o + 12] = 0; out[o + 13] = 0; out[o + 14] = 0; out[o + 15] = 1;
}

/** Writes the modified-DH (Craig) link transform into out[o..o+15]. */
export function modifiedLinkInto(
  out: Float64Array, o: number, a: number, ca: number, sa: number, d: number, theta: number,
): void {
  const ct = Math.cos(theta);
  const st = Math.sin(theta);
  out[o] = ct; out[o + 1] = -st; out[o + 2] = 0; out[o + 3] = a;
  out[o + 4] = st * ca; out[o + 5] = ct * ca; out[o + 6] = -sa; out[o + 7] = -sa * d;
  out[o + 8] = st * sa; out[o + 9] = ct * sa; out[o + 10] = ca; out[o + 11] = ca * d;
  out[o + 12] = 0; out[o + 13] = 0; out[o + 14] = 0; out[o + 15] = 1;
}

/** Allocating helper: one link transform for a joint of the given convention at joint value qi. */
export function linkTransform(convention: ArmModel["convention"], joint: ArmJoint, qi: number): Float64Array {
  const out = new Float64Array(16);
  const theta = joint.type === "revolute" ? joint.theta + qi : joint.theta;
  const d = joint.type === "prismatic" ? joint.d + qi : joint.d;
  const f = convention === "standard" ? standardLinkInto : modifiedLinkInto;
  f(out, 0, joint.a, Math.cos(joint.alpha), Math.sin(joint.alpha), d, theta);
  return out;
}

/**
 * Rewrites a standard-DH arm in modified DH with the same pose for every q (derived; METHODS.md §5):
 * modified row i takes (α_{i-1}, a_{i-1}, d_i, θ_i) of the standard table with α_0 = a_0 = 0, and the
 * last link's Tx(a_n) Rx(α_n) moves into the tool. Works because Tx and Rx commute.
 */
export function standardToModified(arm: ArmModel): ArmModel {
  validateArm(arm);
  if (arm.convention !== "standard") throw new KinematicsInputError("convention", "standardToModified expects a standard-DH arm");
  const n = arm.joints.length;
  const joints = arm.joints.map((j, i) => {
    const prev = i > 0 ? arm.joints[i - 1]! : undefined;
    return { ...j, a: prev ? prev.a : 0, alpha: prev ? prev.alpha : 0 };
  });
  const last = arm.joints[n - 1]!;
  const ca = Math.cos(last.alpha);
  const sa = Math.sin(last.alpha);
  // Tx(a_n) Rx(α_n)
  const tail = new Float64Array([1, 0, 0, last.a, 0, ca, -sa, 0, 0, sa, ca, 0, 0, 0, 0, 1]);
  const tool = new Float64Array(16);
  if (arm.tool) {
    const t = Float64Array.from(arm.tool);
    for (let r = 0; r < 4; r++) {
      for (let c = 0; c < 4; c++) {
        let s = 0;
        for (let k = 0; k < 4; k++) s += tail[4 * r + k]! * t[4 * k + c]!;
        tool[4 * r + c] = s;
      }
    }
  } else {
    tool.set(tail);
  }
  const out: ArmModel = { convention: "modified", joints, tool: Array.from(tool) };
  if (arm.base) out.base = Array.from(arm.base);
  return out;
}
