/**
 * Singular values and symmetric eigenvalues by Jacobi rotations. Dimensionless (works in whatever units
 * J carries; for the geometric Jacobian, metres and radians mixed — see METHODS.md §3 on units).
 *
 * - svdInto: one-sided Jacobi SVD (Hestenes 1958; Demmel & Veselić 1992, who show it computes small
 *   singular values to high relative accuracy; rotation as in Golub & Van Loan 2013, sect. 8.6.3).
 *   Columns of the tall orientation B (B = A, or Aᵀ when rows < cols) are orthogonalised pairwise until
 *   every |b_i·b_j| ≤ 1e-15·|b_i||b_j|; σ_j = |b_j|.
 * - symmetricEigenInto: cyclic two-sided Jacobi for symmetric matrices (Jacobi 1846; Golub & Van Loan
 *   2013, sect. 8.5.2, Algorithm 8.5.1 sym.schur2).
 * Scratch is module-level and grows to the largest size seen; the hot path never grows it.
 */

import { requireMatrix } from "./arm.ts";

let work = new Float64Array(144);
let vwork = new Float64Array(144);
let sig = new Float64Array(12);
let order = new Int32Array(12);

function ensure(size: number, vsize: number, k: number): void {
  if (work.length < size) work = new Float64Array(size);
  if (vwork.length < vsize) vwork = new Float64Array(vsize);
  if (sig.length < k) sig = new Float64Array(k);
  if (order.length < k) order = new Int32Array(k);
}

function sortDescending(values: Float64Array, k: number): void {
  for (let i = 0; i < k; i++) order[i] = i;
  // insertion sort on indices (k is small)
  for (let i = 1; i < k; i++) {
    const oi = order[i]!;
    const v = values[oi]!;
    let j = i - 1;
    while (j >= 0 && values[order[j]!]! < v) {
      order[j + 1] = order[j]!;
      j--;
    }
    order[j + 1] = oi;
  }
}

/**
 * t = tan θ of the Jacobi rotation that zeroes the off-diagonal of [[a, b], [b, d]], from
 * τ = (d − a)/(2b): t = sign(τ)/(|τ| + sqrt(1 + τ²)), the smaller root (Golub & Van Loan 2013, sect. 8.5.2;
 * the one-sided form, sect. 8.6.3, with a = |b_i|², d = |b_j|², b = b_i·b_j). Then c = 1/sqrt(1 + t²), s = t·c.
 */
function jacobiTangent(tau: number): number {
  return (tau >= 0 ? 1 : -1) / (Math.abs(tau) + Math.sqrt(1 + tau * tau));
}

/**
 * Plane rotation of two strided vectors of X, x = X[xo + t·stride] and y = X[yo + t·stride] for t < count:
 * x ← c·x − s·y, y ← s·x + c·y (in place).
 */
function rotatePair(X: Float64Array, xo: number, yo: number, stride: number, count: number, c: number, s: number): void {
  for (let t = 0; t < count; t++) {
    const x = X[xo + t * stride]!, y = X[yo + t * stride]!;
    X[xo + t * stride] = c * x - s * y;
    X[yo + t * stride] = s * x + c * y;
  }
}

/**
 * Full SVD A = U Σ Vᵀ of a rows x cols row-major matrix. k = min(rows, cols).
 * Writes σ (k, descending) into outSigma; when given, U (rows x k) and V (cols x k) row-major, columns
 * the singular vectors (a column for σ = 0 is written as zeros in the long-side factor).
 * Returns the number of sweeps used (≤ 60). Allocation-free once scratch has grown.
 */
export function svdInto(
  A: ArrayLike<number>, rows: number, cols: number, outSigma: Float64Array,
  outU: Float64Array | null = null, outV: Float64Array | null = null,
): number {
  const tall = rows >= cols;
  const p = tall ? rows : cols; // column length of B
  const r = tall ? cols : rows; // number of columns of B
  ensure(p * r, r * r, r);
  const B = work; // column-major: B[j*p + i]
  const V = vwork; // column-major r x r
  for (let j = 0; j < r; j++) {
    for (let i = 0; i < p; i++) B[j * p + i] = tall ? A[i * cols + j]! : A[j * cols + i]!;
    for (let i = 0; i < r; i++) V[j * r + i] = i === j ? 1 : 0;
  }
  let sweep = 0;
  for (; sweep < 60; sweep++) {
    let rotated = false;
    for (let i = 0; i < r - 1; i++) {
      for (let j = i + 1; j < r; j++) {
        let alpha = 0, beta = 0, gamma = 0;
        for (let t = 0; t < p; t++) {
          const bi = B[i * p + t]!, bj = B[j * p + t]!;
          alpha += bi * bi;
          beta += bj * bj;
          gamma += bi * bj;
        }
        if (gamma === 0 || Math.abs(gamma) <= 1e-15 * Math.sqrt(alpha * beta)) continue;
        rotated = true;
        // ζ = (β − α)/(2γ); the rotation by t zeroes b_i·b_j (GVL 8.6.3).
        const tt = jacobiTangent((beta - alpha) / (2 * gamma));
        const c = 1 / Math.sqrt(1 + tt * tt);
        const s = c * tt;
        rotatePair(B, i * p, j * p, 1, p, c, s);
        rotatePair(V, i * r, j * r, 1, r, c, s);
      }
    }
    if (!rotated) break;
  }
  for (let j = 0; j < r; j++) {
    let s = 0;
    for (let t = 0; t < p; t++) s += B[j * p + t]! * B[j * p + t]!;
    sig[j] = Math.sqrt(s);
  }
  sortDescending(sig, r);
  for (let c = 0; c < r; c++) outSigma[c] = sig[order[c]!]!;
  // Long-side factor (p x r): normalised columns of B. Short-side factor (r x r): V.
  const longOut = tall ? outU : outV;
  const shortOut = tall ? outV : outU;
  if (longOut) {
    for (let c = 0; c < r; c++) {
      const j = order[c]!;
      const s = sig[j]!;
      const inv = s > 0 ? 1 / s : 0;
      for (let t = 0; t < p; t++) longOut[t * r + c] = B[j * p + t]! * inv;
    }
  }
  if (shortOut) {
    for (let c = 0; c < r; c++) {
      const j = order[c]!;
      for (let t = 0; t < r; t++) shortOut[t * r + c] = V[j * r + t]!;
    }
  }
  return sweep + 1;
}

/**
 * Eigen-decomposition of a symmetric n x n row-major matrix S (only read, not modified):
 * values descending into outValues, unit eigenvectors as the columns of outVectors (n x n row-major)
 * when given. Returns the number of sweeps (≤ 50).
 */
export function symmetricEigenInto(
  S: ArrayLike<number>, n: number, outValues: Float64Array, outVectors: Float64Array | null = null,
): number {
  ensure(n * n, n * n, n);
  const A = work;
  const V = vwork;
  let norm = 0;
  for (let i = 0; i < n * n; i++) {
    A[i] = S[i]!;
    norm += A[i]! * A[i]!;
    V[i] = 0;
  }
  for (let i = 0; i < n; i++) V[i * n + i] = 1;
  let sweep = 0;
  for (; sweep < 50; sweep++) {
    let off = 0;
    for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) off += 2 * A[i * n + j]! * A[i * n + j]!;
    if (off <= 1e-30 * norm || off === 0) break;
    for (let p = 0; p < n - 1; p++) {
      for (let q = p + 1; q < n; q++) {
        const apq = A[p * n + q]!;
        if (apq === 0) continue;
        const t = jacobiTangent((A[q * n + q]! - A[p * n + p]!) / (2 * apq));
        const c = 1 / Math.sqrt(1 + t * t);
        const s = t * c;
        // A ← A J (columns p, q), then A ← Jᵀ A (rows p, q), V ← V J with J = [[c, s], [−s, c]] in the (p, q) plane.
        rotatePair(A, p, q, n, n, c, s);
        rotatePair(A, p * n, q * n, 1, n, c, s);
        rotatePair(V, p, q, n, n, c, s);
      }
    }
  }
  for (let i = 0; i < n; i++) sig[i] = A[i * n + i]!;
  sortDescending(sig, n);
  for (let c = 0; c < n; c++) outValues[c] = sig[order[c]!]!;
  if (outVectors) {
    for (let c = 0; c < n; c++) {
      const j = order[c]!;
      for (let t = 0; t < n; t++) outVectors[t * n + c] = V[t * n + j]!;
    }
  }
  return sweep + 1;
}

/** All min(rows, cols) singular values of J, descending. Validates its inputs. */
export function singularValues(J: ArrayLike<number>, rows: number, cols: number): Float64Array {
  requireMatrix(J, rows, cols);
  const out = new Float64Array(Math.min(rows, cols));
  svdInto(J, rows, cols, out);
  return out;
}

/**
 * Yoshikawa 1985 manipulability w = sqrt(det(J Jᵀ)) = σ_1·…·σ_rows for rows ≤ cols. For rows > cols,
 * J Jᵀ is rank-deficient and w = 0 by this definition. Validates its inputs.
 */
export function manipulability(J: ArrayLike<number>, rows: number, cols: number): number {
  requireMatrix(J, rows, cols);
  if (rows > cols) return 0;
  const s = new Float64Array(rows);
  svdInto(J, rows, cols, s);
  let w = 1;
  for (let i = 0; i < rows; i++) w *= s[i]!;
  return w;
}
