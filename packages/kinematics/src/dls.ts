/**
 * Damped least-squares inverse (Wampler 1986; Nakamura & Hanafusa 1986 — both from memory):
 *   qdot = Jᵀ (J Jᵀ + λ² I)⁻¹ · twist  =  (Jᵀ J + λ² I)⁻¹ Jᵀ · twist
 * solved with a Cholesky factor of the smaller Gram matrix (rows ≤ cols: J Jᵀ, else Jᵀ J). λ = 0 gives the
 * plain inverse (pseudo-inverse for a full-rank non-square J).
 * Numerical filtering (Maciejewski & Klein 1988, from memory; METHODS.md §2d): damp only chosen singular
 * directions x_j: replace λ² I by Σ_j λ_j² x_j x_jᵀ, giving gain σ_j/(σ_j² + λ_j²) along them and 1/σ_i on the
 * others (dlsFilteredFromGramInto; the control step damps every direction whose σ is below ε).
 * Units: twist in m/s and rad/s, qdot in rad/s (or m/s for a prismatic joint), λ in the units of σ.
 */

import { KinematicsInputError, requireFiniteVector, requireMatrix } from "./arm.ts";
import { choleskyInto, choleskySolve6InPlace, choleskySolveInPlace, gramInto } from "./cholesky.ts";

let gram = new Float64Array(144);
let factor = new Float64Array(144);
let rhs = new Float64Array(12);

function ensure(k: number): void {
  if (gram.length < k * k) {
    gram = new Float64Array(k * k);
    factor = new Float64Array(k * k);
  }
  if (rhs.length < k) rhs = new Float64Array(k);
}

const lambdaBox = new Float64Array(1);

/**
 * DLS solve from a precomputed Gram matrix G (from gramInto, k = min(rows, cols)). `filterDir`, when given
 * (unit k-vector), switches to numerical filtering along it. `L` and `y` are caller scratch (k·k and k).
 * Writes qdot (cols) into `out`. Returns false when the damped Gram matrix is singular to working
 * precision, e.g. λ = 0 at a singularity, or the result is not finite. Allocation-free.
 */
export function dampedLeastSquaresFromGramInto(
  J: ArrayLike<number>, rows: number, cols: number, G: Float64Array, twist: ArrayLike<number>,
  lambda: number, filterDir: ArrayLike<number> | null, L: Float64Array, y: Float64Array, out: Float64Array,
): boolean {
  lambdaBox[0] = lambda;
  return dlsFromGramBoxed(J, rows, cols, G, twist, lambdaBox, filterDir, L, y, out);
}

/**
 * As dampedLeastSquaresFromGramInto with λ passed in lambdaBox[0]: a computed number passed to a call
 * that V8 does not inline is boxed on the heap, a typed-array slot is not (keeps the control step
 * allocation-free).
 */
export function dlsFromGramBoxed(
  J: ArrayLike<number>, rows: number, cols: number, G: Float64Array, twist: ArrayLike<number>,
  lambdaBox: Float64Array, filterDir: ArrayLike<number> | null, L: Float64Array, y: Float64Array, out: Float64Array,
): boolean {
  const k = rows <= cols ? rows : cols;
  const lambda = lambdaBox[0]!;
  if (filterDir) {
    filterLambda[0] = lambda;
    return dlsFilteredFromGramInto(J, rows, cols, G, twist, filterDir, filterLambda, 1, L, y, out);
  }
  const l2 = lambda * lambda;
  // Add the damping onto G's diagonal in place, factor, then restore G (so the caller can reuse it).
  for (let i = 0; i < k; i++) G[i * k + i] = G[i * k + i]! + l2;
  const ok = choleskyInto(G, k, L);
  for (let i = 0; i < k; i++) G[i * k + i] = G[i * k + i]! - l2;
  if (!ok) return false;
  return dlsSolveWithFactor(J, rows, cols, L, twist, y, out);
}

const filterLambda = new Float64Array(1);

/**
 * Numerical filtering along `count` directions (Maciejewski & Klein 1988 damp the smallest one; the
 * control step damps every direction whose σ is below ε): factors
 *   F = G + Σ_j λ_j² d_j d_jᵀ,   d_j = dirs[j·k … j·k + k − 1] (unit k-vectors, k = min(rows, cols))
 * into L (G is only read) and writes qdot = Jᵀ F⁻¹ twist (rows ≤ cols; else F⁻¹ Jᵀ twist) into `out`.
 * For orthonormal singular directions d_j this gives gain σ_j/(σ_j² + λ_j²) along d_j and 1/σ_i on every
 * other direction (derived from the SVD form, METHODS.md §2d). L holds the factor afterwards, so the
 * caller can solve further right-hand sides with dlsSolveWithFactor. False when F is singular to working
 * precision or the result is not finite. Allocation-free.
 */
export function dlsFilteredFromGramInto(
  J: ArrayLike<number>, rows: number, cols: number, G: ArrayLike<number>, twist: ArrayLike<number>,
  dirs: ArrayLike<number>, lambdas: ArrayLike<number>, count: number, L: Float64Array, y: Float64Array,
  out: Float64Array,
): boolean {
  const k = rows <= cols ? rows : cols;
  const kk = k * k;
  for (let i = 0; i < kk; i++) L[i] = G[i]!;
  for (let d = 0; d < count; d++) {
    const l = lambdas[d]!;
    const l2 = l * l;
    if (l2 === 0) continue;
    const o = d * k;
    for (let i = 0; i < k; i++) {
      const di = l2 * dirs[o + i]!;
      for (let j = 0; j < k; j++) L[i * k + j] = L[i * k + j]! + di * dirs[o + j]!;
    }
  }
  // Cholesky in place: each entry of the lower triangle is read before it is overwritten (cholesky.ts).
  if (!choleskyInto(L, k, L)) return false;
  return dlsSolveWithFactor(J, rows, cols, L, twist, y, out);
}

/**
 * The solve half of the DLS given a Cholesky factor L of the damped Gram matrix (k = min(rows, cols)):
 * rows ≤ cols: out = Jᵀ (L Lᵀ)⁻¹ twist; else out = (L Lᵀ)⁻¹ Jᵀ twist. False if the result is not finite.
 */
export function dlsSolveWithFactor(
  J: ArrayLike<number>, rows: number, cols: number, L: Float64Array, twist: ArrayLike<number>, y: Float64Array,
  out: Float64Array,
): boolean {
  const k = rows <= cols ? rows : cols;
  if (rows === 6 && cols >= 6) return dlsSolve6WithFactor(J, cols, L, twist, y, out);
  if (rows <= cols) {
    for (let i = 0; i < rows; i++) y[i] = twist[i]!;
    choleskySolveInPlace(L, k, y);
    for (let c = 0; c < cols; c++) {
      let s = 0;
      for (let r = 0; r < rows; r++) s += J[r * cols + c]! * y[r]!;
      out[c] = s;
    }
  } else {
    for (let c = 0; c < cols; c++) {
      let s = 0;
      for (let r = 0; r < rows; r++) s += J[r * cols + c]! * twist[r]!;
      y[c] = s;
    }
    choleskySolveInPlace(L, k, y);
    for (let c = 0; c < cols; c++) out[c] = y[c]!;
  }
  let ok = true;
  for (let c = 0; c < cols; c++) if (!(Math.abs(out[c]!) < Infinity)) ok = false;
  return ok;
}

/**
 * dlsSolveWithFactor for a 6-row J with cols ≥ 6 (the control step of every arm with six or more joints):
 * y = (L Lᵀ)⁻¹ twist by the written-out 6x6 substitution, then out = Jᵀ y with y in locals. Same operations
 * in the same order as the general loops, so bit-identical (derived).
 */
function dlsSolve6WithFactor(
  J: ArrayLike<number>, cols: number, L: Float64Array, twist: ArrayLike<number>, y: Float64Array, out: Float64Array,
): boolean {
  for (let i = 0; i < 6; i++) y[i] = twist[i]!;
  choleskySolve6InPlace(L, y);
  return jtY6Into(J, cols, y, out);
}

/**
 * out = Jᵀ y for a 6-row J (cols ≥ 6), the last half of the undamped 6-row DLS; false if a result is not
 * finite. Also used by the control step when the σ estimator has already solved for y.
 */
export function jtY6Into(J: ArrayLike<number>, cols: number, y: Float64Array, out: Float64Array): boolean {
  const y0 = y[0]!, y1 = y[1]!, y2 = y[2]!, y3 = y[3]!, y4 = y[4]!, y5 = y[5]!;
  const c2 = 2 * cols, c3 = 3 * cols, c4 = 4 * cols, c5 = 5 * cols;
  let ok = true;
  for (let c = 0; c < cols; c++) {
    const v = 0 + J[c]! * y0 + J[cols + c]! * y1 + J[c2 + c]! * y2 + J[c3 + c]! * y3 + J[c4 + c]! * y4 + J[c5 + c]! * y5;
    out[c] = v;
    if (!(Math.abs(v) < Infinity)) ok = false;
  }
  return ok;
}

/**
 * Allocation-free DLS (module scratch): writes qdot (cols numbers) into `out`; returns false when the
 * damped system is singular (then `out` is zeroed). Inputs are not validated.
 */
export function dampedLeastSquaresInto(
  J: ArrayLike<number>, rows: number, cols: number, twist: ArrayLike<number>, lambda: number, out: Float64Array,
  filterDir: ArrayLike<number> | null = null,
): boolean {
  const k = Math.min(rows, cols);
  ensure(k);
  gramInto(J, rows, cols, gram);
  const ok = dampedLeastSquaresFromGramInto(J, rows, cols, gram, twist, lambda, filterDir, factor, rhs, out);
  if (!ok) out.fill(0, 0, cols);
  return ok;
}

/**
 * qdot = Jᵀ (J Jᵀ + λ² I)⁻¹ · twist. Validates its inputs and throws KinematicsInputError for bad input or
 * when λ = 0 (or tiny) and J is singular.
 */
export function dampedLeastSquares(
  J: ArrayLike<number>, rows: number, cols: number, twist: ArrayLike<number>, lambda: number,
): Float64Array {
  requireMatrix(J, rows, cols);
  requireFiniteVector(twist, rows, "twist");
  if (typeof lambda !== "number" || !Number.isFinite(lambda) || lambda < 0) {
    throw new KinematicsInputError("lambda", `must be a finite number ≥ 0, got ${String(lambda)}`);
  }
  const out = new Float64Array(cols);
  if (!dampedLeastSquaresInto(J, rows, cols, twist, lambda, out)) {
    throw new KinematicsInputError("J", "J Jᵀ + λ²I is singular to working precision; use lambda > 0");
  }
  return out;
}
