/**
 * Hot-path estimate of the smallest singular value σ_min of J (and the matching singular direction),
 * without a full SVD.
 *
 * Method: block inverse iteration with two vectors on the Gram matrix G (J Jᵀ, or Jᵀ J when J has fewer
 * columns than rows; its eigenvalues are σ²), using one Cholesky factor of G + δI, followed by a 2x2
 * Rayleigh–Ritz step, warm-started from the previous control step's vectors. Tracking the two smallest
 * values follows Chiaverini 1993 ("Estimate of the two smallest singular values of the Jacobian matrix",
 * J. Robotic Systems 10(8) — from memory); warm-starting from the previous step's singular vectors is the
 * idea of Maciejewski & Klein 1989. Inverse iteration and Rayleigh–Ritz: Golub & Van Loan 2013, sect. 8.2.
 *
 * Accuracy contract (checked against the full one-sided Jacobi SVD in sigma-estimate.test.ts):
 * iteration stops when the Ritz residual |G x − μ x| ≤ 1e-3·μ + 1e-13·trace(G); for a symmetric matrix
 * some eigenvalue lies within that residual of μ (Golub & Van Loan 2013, sect. 8.1), so σ_min is accurate
 * to ~5e-4 relative (in practice far better: the eigenvalue error is quadratic in the residual), or
 * ~3e-7·σ_max absolute near a singularity (the Gram matrix cannot
 * resolve σ below ~1e-8·σ_max; METHODS.md §9 — fine for threshold decisions). If it has not converged
 * after `maxIterations` (a cold start, a jump, or an eigenvalue crossing from outside the tracked pair),
 * or every `refreshInterval` calls, it falls back to a full cyclic-Jacobi eigen-decomposition of G.
 *
 * Units: those of J (σ in m/rad-mixed units for the geometric Jacobian).
 */

import { choleskySolveInPlace } from "./cholesky.ts";
import { symmetricEigenInto } from "./svd.ts";

export interface SigmaTracker {
  /** Size of the Gram matrix, min(rows, cols). */
  readonly k: number;
  /** Unit vector estimating the singular direction of σ_min (left vector u if G = J Jᵀ, right v if G = Jᵀ J). */
  readonly x1: Float64Array;
  readonly x2: Float64Array;
  readonly L: Float64Array;
  readonly y1: Float64Array;
  readonly y2: Float64Array;
  readonly g1: Float64Array;
  readonly g2: Float64Array;
  readonly eigValues: Float64Array;
  readonly eigVectors: Float64Array;
  /** Estimated smallest and second-smallest singular values after the last call. */
  sigmaMin: number;
  sigmaSecond: number;
  /** Manipulability w = sqrt(det G) = product of the k singular values, from the same factorisation. */
  manipulability: number;
  /** Inverse-iteration steps used by the last call (0 when it used the full decomposition). */
  iterations: number;
  /** True when the last call fell back to (or started with) the full eigen-decomposition. */
  usedFullDecomposition: boolean;
  /** True when L holds the Cholesky factor of G + δI from the last call (δ ≈ 1e-14·trace G, in `shift`). */
  factorValid: boolean;
  shift: number;
  warm: boolean;
  callsSinceRefresh: number;
  maxIterations: number;
  refreshInterval: number;
}

export function createSigmaTracker(k: number, maxIterations = 4, refreshInterval = 250): SigmaTracker {
  return {
    k,
    x1: new Float64Array(k),
    x2: new Float64Array(k),
    L: new Float64Array(k * k),
    y1: new Float64Array(k),
    y2: new Float64Array(k),
    g1: new Float64Array(k),
    g2: new Float64Array(k),
    eigValues: new Float64Array(k),
    eigVectors: new Float64Array(k * k),
    sigmaMin: 0,
    sigmaSecond: 0,
    manipulability: 0,
    iterations: 0,
    usedFullDecomposition: false,
    factorValid: false,
    shift: 0,
    warm: false,
    callsSinceRefresh: 0,
    maxIterations,
    refreshInterval,
  };
}

/** Forget the warm start (next call does a full decomposition). */
export function resetSigmaTracker(t: SigmaTracker): void {
  t.warm = false;
}

function fullDecomposition(t: SigmaTracker, G: ArrayLike<number>): void {
  const k = t.k;
  symmetricEigenInto(G, k, t.eigValues, t.eigVectors);
  for (let i = 0; i < k; i++) {
    t.x1[i] = t.eigVectors[i * k + (k - 1)]!;
    t.x2[i] = k > 1 ? t.eigVectors[i * k + (k - 2)]! : 0;
  }
  t.sigmaMin = Math.sqrt(Math.max(0, t.eigValues[k - 1]!));
  t.sigmaSecond = k > 1 ? Math.sqrt(Math.max(0, t.eigValues[k - 2]!)) : t.sigmaMin;
  let w = 1;
  for (let i = 0; i < k; i++) w *= Math.sqrt(Math.max(0, t.eigValues[i]!));
  t.manipulability = w;
  t.iterations = 0;
  t.usedFullDecomposition = true;
  t.factorValid = false;
  t.warm = true;
  t.callsSinceRefresh = 0;
}

/**
 * Updates t.sigmaMin, t.sigmaSecond and t.x1 (direction of σ_min) for the Gram matrix G (k x k, row-major,
 * finite). Allocation-free (results in fields, so no number is boxed on return).
 */
export function estimateSigmaMin(t: SigmaTracker, G: ArrayLike<number>): void {
  const k = t.k;
  t.callsSinceRefresh++;
  t.factorValid = false;
  if (k < 2 || !t.warm || (t.refreshInterval > 0 && t.callsSinceRefresh >= t.refreshInterval)) {
    fullDecomposition(t, G);
    return;
  }
  let trace = 0;
  for (let i = 0; i < k; i++) trace += G[i * k + i]!;
  // Shift δ keeps the factorisation defined at an exact singularity; it changes nothing measurable.
  const delta = 1e-14 * trace + 1e-300;
  t.shift = delta;
  const L = t.L;
  // Cholesky of G + δI (Golub & Van Loan 2013, Alg. 4.2.2), inline to stay allocation-free.
  for (let j = 0; j < k; j++) {
    let d = G[j * k + j]! + delta;
    const ajj = d;
    for (let p = 0; p < j; p++) d -= L[j * k + p]! * L[j * k + p]!;
    if (!(d > 1e-15 * ajj) || !(d < Infinity)) {
      fullDecomposition(t, G);
      return;
    }
    const ljj = Math.sqrt(d);
    L[j * k + j] = ljj;
    const inv = 1 / ljj;
    for (let i = j + 1; i < k; i++) {
      let s = G[i * k + j]!;
      for (let p = 0; p < j; p++) s -= L[i * k + p]! * L[j * k + p]!;
      L[i * k + j] = s * inv;
      L[j * k + i] = 0;
    }
  }
  t.factorValid = true;
  // sqrt(det(G + δI)) = ∏ L_jj; δ changes it only where σ_j² is comparable to δ (σ_j ≲ 1e-7·σ_max).
  let w = 1;
  for (let j = 0; j < k; j++) w *= L[j * k + j]!;
  t.manipulability = w;
  const x1 = t.x1, x2 = t.x2, y1 = t.y1, y2 = t.y2, g1 = t.g1, g2 = t.g2;
  const tol = 1e-13 * trace;
  for (let it = 1; it <= t.maxIterations; it++) {
    for (let i = 0; i < k; i++) {
      y1[i] = x1[i]!;
      y2[i] = x2[i]!;
    }
    choleskySolveInPlace(L, k, y1);
    choleskySolveInPlace(L, k, y2);
    // Orthonormalise (modified Gram–Schmidt).
    let n1 = 0;
    for (let i = 0; i < k; i++) n1 += y1[i]! * y1[i]!;
    n1 = Math.sqrt(n1);
    if (!(n1 > 0) || !(n1 < Infinity)) break;
    for (let i = 0; i < k; i++) y1[i] = y1[i]! / n1;
    let d = 0;
    for (let i = 0; i < k; i++) d += y1[i]! * y2[i]!;
    let n2 = 0;
    for (let i = 0; i < k; i++) {
      y2[i] = y2[i]! - d * y1[i]!;
      n2 += y2[i]! * y2[i]!;
    }
    n2 = Math.sqrt(n2);
    if (!(n2 > 1e-8)) break; // the pair collapsed onto one direction: restart from the full decomposition
    for (let i = 0; i < k; i++) y2[i] = y2[i]! / n2;
    // Rayleigh–Ritz on span{y1, y2}. No product with G is needed: y = (G + δI)⁻¹ x gives
    // G y = x − δ y (derived), so with q1 = y1/n1 and q2 = (y2 − d·q1)/n2:
    //   G q1 = (x1 − δ·n1·q1)/n1,   G q2 = (x2 − δ·(n2·q2 + d·q1) − d·G q1)/n2.
    for (let i = 0; i < k; i++) {
      const gq1 = (x1[i]! - delta * y1[i]! * n1) / n1;
      g1[i] = gq1;
      g2[i] = (x2[i]! - delta * (y2[i]! * n2 + d * y1[i]!) - d * gq1) / n2;
    }
    let h11 = 0, h12 = 0, h22 = 0;
    for (let i = 0; i < k; i++) {
      h11 += y1[i]! * g1[i]!;
      h12 += y1[i]! * g2[i]!;
      h22 += y2[i]! * g2[i]!;
    }
    // 2x2 Jacobi rotation diagonalising [[h11, h12], [h12, h22]] (GVL 2013, Alg. 8.5.1).
    let c = 1, s = 0;
    if (h12 !== 0) {
      const tau = (h22 - h11) / (2 * h12);
      const tt = (tau >= 0 ? 1 : -1) / (Math.abs(tau) + Math.sqrt(1 + tau * tau));
      c = 1 / Math.sqrt(1 + tt * tt);
      s = tt * c;
    }
    // New diagonal: μa for (c, −s), μb for (s, c).
    const mua = c * c * h11 - 2 * c * s * h12 + s * s * h22;
    const mub = s * s * h11 + 2 * c * s * h12 + c * c * h22;
    let ca: number, sa: number, cb: number, sb: number, mu1: number, mu2: number;
    if (mua <= mub) {
      ca = c; sa = -s; cb = s; sb = c; mu1 = mua; mu2 = mub;
    } else {
      ca = s; sa = c; cb = c; sb = -s; mu1 = mub; mu2 = mua;
    }
    let r2 = 0;
    for (let i = 0; i < k; i++) {
      const a1 = ca * y1[i]! + sa * y2[i]!;
      const a2 = cb * y1[i]! + sb * y2[i]!;
      x1[i] = a1;
      x2[i] = a2;
      const r = ca * g1[i]! + sa * g2[i]! - mu1 * a1;
      r2 += r * r;
    }
    const res = Math.sqrt(r2);
    if (res <= 1e-3 * Math.max(mu1, 0) + tol) {
      t.sigmaMin = Math.sqrt(Math.max(0, mu1));
      t.sigmaSecond = Math.sqrt(Math.max(0, mu2));
      t.iterations = it;
      t.usedFullDecomposition = false;
      return;
    }
  }
  fullDecomposition(t, G);
}

/** Copies the warm-start state of `from` into `to` (same k). Allocation-free. */
export function copySigmaTracker(from: SigmaTracker, to: SigmaTracker): void {
  to.x1.set(from.x1);
  to.x2.set(from.x2);
  to.sigmaMin = from.sigmaMin;
  to.sigmaSecond = from.sigmaSecond;
  to.manipulability = from.manipulability;
  to.warm = from.warm;
  to.callsSinceRefresh = 0;
}
