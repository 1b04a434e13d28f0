/**
 * Velocity-manipulability ellipsoid (Yoshikawa 1985): the image of the unit joint-speed ball
 * |qdot| ≤ 1 under J_P (linear part) or J_O (angular part). Its semi-axes are the eigenvectors of
 * J_P J_Pᵀ (3x3) with lengths sqrt(eigenvalue) = the singular values of J_P. Units: m/s (linear) or rad/s
 * (angular) per unit joint speed.
 */

import { KinematicsInputError, requireMatrix } from "./arm.ts";
import { symmetricEigenInto } from "./svd.ts";

export interface VelocityEllipsoid {
  /** Unit semi-axis directions, world frame: axis i is axes[3i..3i+2]. */
  axes: Float64Array;
  /** Semi-axis lengths, descending, paired with `axes`. */
  lengths: Float64Array;
  /** Volume measure sqrt(det(J_P J_Pᵀ)) = product of the lengths. */
  manipulability: number;
}

const block = new Float64Array(9);
const values = new Float64Array(3);
const vectors = new Float64Array(9);

/**
 * Writes the ellipsoid of rows `firstRow..firstRow+2` of J (rows x cols) into out. Allocation-free.
 */
export function velocityEllipsoidInto(
  J: ArrayLike<number>, cols: number, firstRow: number, out: VelocityEllipsoid,
): VelocityEllipsoid {
  for (let i = 0; i < 3; i++) {
    for (let j = i; j < 3; j++) {
      let s = 0;
      for (let c = 0; c < cols; c++) s += J[(firstRow + i) * cols + c]! * J[(firstRow + j) * cols + c]!;
      block[3 * i + j] = s;
      block[3 * j + i] = s;
    }
  }
  symmetricEigenInto(block, 3, values, vectors);
  let w = 1;
  for (let i = 0; i < 3; i++) {
    const len = Math.sqrt(Math.max(0, values[i]!));
    out.lengths[i] = len;
    w *= len;
    for (let r = 0; r < 3; r++) out.axes[3 * i + r] = vectors[r * 3 + i]!;
  }
  out.manipulability = w;
  return out;
}

/**
 * Velocity ellipsoid of J for drawing. J is 6 x n (geometric Jacobian; `part` picks the linear rows 0–2
 * or the angular rows 3–5) or 3 x n (a block already). Validates its inputs.
 */
export function velocityEllipsoid(
  J: ArrayLike<number>, rows: number, cols: number, part: "linear" | "angular" = "linear",
): VelocityEllipsoid {
  requireMatrix(J, rows, cols);
  if (rows !== 3 && rows !== 6) throw new KinematicsInputError("rows", `must be 3 or 6, got ${rows}`);
  const firstRow = rows === 6 && part === "angular" ? 3 : 0;
  return velocityEllipsoidInto(J, cols, firstRow, {
    axes: new Float64Array(9),
    lengths: new Float64Array(3),
    manipulability: 0,
  });
}
