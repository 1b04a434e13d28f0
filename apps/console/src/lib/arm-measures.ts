import { geometricJacobian, manipulability, singularValues, type ArmModel } from "@jogwright/kinematics";

/**
 * How far from singular an arm is at one pose, computed in the browser with the kinematics package: the
 * smallest singular value σ_min of the 6×n geometric Jacobian (rows m/s and rad/s, so σ_min is in m per
 * rad for an all-revolute arm) and the manipulability. The same definitions as the server's upload preview
 * (`previewArm` in apps/server/src/modules/arms/upload.ts), so the two agree at q = 0: Yoshikawa's
 * √det(J Jᵀ) for n ≥ 6, and below six joints (J Jᵀ singular by rank) the product of the n singular values,
 * √det(Jᵀ J).
 */
export interface PoseMeasures {
  sigmaMin: number;
  manipulability: number;
}

export function poseMeasures(model: ArmModel, q: readonly number[]): PoseMeasures {
  const n = model.joints.length;
  const J = geometricJacobian(model, Float64Array.from({ length: n }, (_, i) => q[i] ?? 0));
  const sigma = singularValues(J, 6, n);
  const w = n >= 6 ? manipulability(J, 6, n) : sigma.reduce((p, s) => p * s, 1);
  return { sigmaMin: sigma[sigma.length - 1]!, manipulability: w };
}
