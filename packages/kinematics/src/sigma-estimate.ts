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

import { choleskyLoopInto, choleskySolveLoopInPlace } from "./cholesky.ts";
import { symmetricEigenInto } from "./svd.ts";

export interface SigmaTracker {
  /** Size of the Gram matrix, min(rows, cols). */
  readonly k: number;
  /** Unit vector estimating the singular direction of σ_min (left vector u if G = J Jᵀ, right v if G = Jᵀ J). */
  readonly x1: Float64Array;
  readonly x2: Float64Array;
  readonly L: Float64Array;
  /** Scratch of the general-k iteration (the written-out k = 6 path keeps these in locals). */
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
 * True when the call about to be made (not yet counted in callsSinceRefresh) must take the full
 * decomposition: k < 2, a cold start, or the periodic refresh. Pure: reads the tracker, changes nothing.
 */
function isFullDecompositionDue(t: SigmaTracker): boolean {
  return t.k < 2 || !t.warm || (t.refreshInterval > 0 && t.callsSinceRefresh + 1 >= t.refreshInterval);
}

/** Counts a call and clears factorValid (a call that factors sets it again; the full decomposition resets the count). */
function countCall(t: SigmaTracker): void {
  t.callsSinceRefresh++;
  t.factorValid = false;
}

/**
 * Updates t.sigmaMin, t.sigmaSecond and t.x1 (direction of σ_min) for the Gram matrix G (k x k, row-major,
 * finite). Allocation-free (results in fields, so no number is boxed on return).
 */
export function estimateSigmaMin(t: SigmaTracker, G: ArrayLike<number>): void {
  const full = isFullDecompositionDue(t);
  countCall(t);
  if (full) fullDecomposition(t, G);
  else if (t.k === 6) estimate6(t, G, null, null);
  else iterate(t, G);
}

/**
 * estimateSigmaMin by the general loop for every k, k = 6 included (internal, not exported from
 * index.ts): the test that pins the written-out estimate6 to the loop, bit for bit, calls it.
 */
export function estimateSigmaMinByLoop(t: SigmaTracker, G: ArrayLike<number>): void {
  const full = isFullDecompositionDue(t);
  countCall(t);
  if (full) fullDecomposition(t, G);
  else iterate(t, G);
}

/** The warm-started iteration for any k (estimateSigmaMin without the full-decomposition cases). */
function iterate(t: SigmaTracker, G: ArrayLike<number>): void {
  const k = t.k;
  let trace = 0;
  for (let i = 0; i < k; i++) trace += G[i * k + i]!;
  // Shift δ keeps the factorisation defined at an exact singularity; it changes nothing measurable.
  const delta = 1e-14 * trace + 1e-300;
  t.shift = delta;
  // Cholesky of G + δI (Golub & Van Loan 2013, Alg. 4.2.2): G + δI (lower triangle) into L, factored in
  // place by cholesky.ts's loop (k ≠ 6 here, or the pinning test's k = 6 by the loop).
  const L = t.L;
  for (let i = 0; i < k; i++) {
    for (let j = 0; j < i; j++) L[i * k + j] = G[i * k + j]!;
    L[i * k + i] = G[i * k + i]! + delta;
  }
  if (!choleskyLoopInto(L, k, L)) {
    fullDecomposition(t, G);
    return;
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
    choleskySolveLoopInPlace(L, k, y1);
    choleskySolveLoopInPlace(L, k, y2);
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

/**
 * estimateSigmaMin for a tracker with k = 6 (not exported from index.ts; the control step's call), which
 * also solves (G + δI) y = b with the estimator's own factor while it is in registers: when t.factorValid
 * is true after the call, `y` holds that solution, computed by the same operations in the same order as
 * choleskySolve6InPlace(t.L, y) with y = b, so bit-identical to the undamped DLS solve of dls.ts
 * (dlsSolveWithFactor). Its substitutions are independent of the iteration's, so the CPU overlaps them;
 * when the step then damps (λ > 0) the solve was wasted work (~50 flops). Otherwise as estimateSigmaMin.
 */
export function estimateSigmaMinSolve6(t: SigmaTracker, G: ArrayLike<number>, b: Float64Array, y: Float64Array): void {
  if (t.k !== 6 || isFullDecompositionDue(t)) {
    estimateSigmaMin(t, G); // cold start or refresh: the full decomposition, no factor
    return;
  }
  countCall(t);
  estimate6(t, G, b, y);
}

/**
 * estimateSigmaMin for k = 6 (every arm with six or more joints): the same algorithm written out with the
 * factor, the two iterates and the Ritz vectors in locals. Every operation is the general loop's, in the
 * same order (JS has no fused multiply-add), so the results are bit-identical; only index arithmetic,
 * loop overhead and bounds checks go (derived; pinned to the loop, estimateSigmaMinByLoop, in sigma-estimate.test.ts).
 * The scratch arrays y1, y2, g1, g2 are not written on this path. With b (and y) given, also solves
 * (G + δI) y = b (estimateSigmaMinSolve6).
 */
function estimate6(t: SigmaTracker, G: ArrayLike<number>, b: Float64Array | null, y: Float64Array | null): void {
  const g00 = G[0]!, g11 = G[7]!, g22 = G[14]!, g33 = G[21]!, g44 = G[28]!, g55 = G[35]!;
  const trace = 0 + g00 + g11 + g22 + g33 + g44 + g55;
  const delta = 1e-14 * trace + 1e-300;
  t.shift = delta;
  // Cholesky of G + δI (cholesky.ts cholesky6Into with the shift; lower triangle of G read).
  let d = g00 + delta;
  let ajj = d;
  if (!(d > 1e-15 * ajj) || !(d < Infinity)) return fullDecomposition(t, G);
  const l00 = Math.sqrt(d);
  let inv = 1 / l00;
  const l10 = G[6]! * inv, l20 = G[12]! * inv, l30 = G[18]! * inv, l40 = G[24]! * inv, l50 = G[30]! * inv;
  d = g11 + delta;
  ajj = d;
  d -= l10 * l10;
  if (!(d > 1e-15 * ajj) || !(d < Infinity)) return fullDecomposition(t, G);
  const l11 = Math.sqrt(d);
  inv = 1 / l11;
  const l21 = (G[13]! - l20 * l10) * inv;
  const l31 = (G[19]! - l30 * l10) * inv;
  const l41 = (G[25]! - l40 * l10) * inv;
  const l51 = (G[31]! - l50 * l10) * inv;
  d = g22 + delta;
  ajj = d;
  d -= l20 * l20; d -= l21 * l21;
  if (!(d > 1e-15 * ajj) || !(d < Infinity)) return fullDecomposition(t, G);
  const l22 = Math.sqrt(d);
  inv = 1 / l22;
  const l32 = (G[20]! - l30 * l20 - l31 * l21) * inv;
  const l42 = (G[26]! - l40 * l20 - l41 * l21) * inv;
  const l52 = (G[32]! - l50 * l20 - l51 * l21) * inv;
  d = g33 + delta;
  ajj = d;
  d -= l30 * l30; d -= l31 * l31; d -= l32 * l32;
  if (!(d > 1e-15 * ajj) || !(d < Infinity)) return fullDecomposition(t, G);
  const l33 = Math.sqrt(d);
  inv = 1 / l33;
  const l43 = (G[27]! - l40 * l30 - l41 * l31 - l42 * l32) * inv;
  const l53 = (G[33]! - l50 * l30 - l51 * l31 - l52 * l32) * inv;
  d = g44 + delta;
  ajj = d;
  d -= l40 * l40; d -= l41 * l41; d -= l42 * l42; d -= l43 * l43;
  if (!(d > 1e-15 * ajj) || !(d < Infinity)) return fullDecomposition(t, G);
  const l44 = Math.sqrt(d);
  inv = 1 / l44;
  const l54 = (G[34]! - l50 * l40 - l51 * l41 - l52 * l42 - l53 * l43) * inv;
  d = g55 + delta;
  ajj = d;
  d -= l50 * l50; d -= l51 * l51; d -= l52 * l52; d -= l53 * l53; d -= l54 * l54;
  if (!(d > 1e-15 * ajj) || !(d < Infinity)) return fullDecomposition(t, G);
  const l55 = Math.sqrt(d);
  const L = t.L;
  L[0] = l00; L[1] = 0; L[2] = 0; L[3] = 0; L[4] = 0; L[5] = 0;
  L[6] = l10; L[7] = l11; L[8] = 0; L[9] = 0; L[10] = 0; L[11] = 0;
  L[12] = l20; L[13] = l21; L[14] = l22; L[15] = 0; L[16] = 0; L[17] = 0;
  L[18] = l30; L[19] = l31; L[20] = l32; L[21] = l33; L[22] = 0; L[23] = 0;
  L[24] = l40; L[25] = l41; L[26] = l42; L[27] = l43; L[28] = l44; L[29] = 0;
  L[30] = l50; L[31] = l51; L[32] = l52; L[33] = l53; L[34] = l54; L[35] = l55;
  t.factorValid = true;
  t.manipulability = l00 * l11 * l22 * l33 * l44 * l55;
  if (b !== null && y !== null) {
    // (G + δI) y = b: L z = b, then Lᵀ y = z (choleskySolve6InPlace's operations).
    const z0 = b[0]! / l00;
    const z1 = (b[1]! - l10 * z0) / l11;
    const z2 = (b[2]! - l20 * z0 - l21 * z1) / l22;
    const z3 = (b[3]! - l30 * z0 - l31 * z1 - l32 * z2) / l33;
    const z4 = (b[4]! - l40 * z0 - l41 * z1 - l42 * z2 - l43 * z3) / l44;
    const z5 = (b[5]! - l50 * z0 - l51 * z1 - l52 * z2 - l53 * z3 - l54 * z4) / l55;
    const y5 = z5 / l55;
    const y4 = (z4 - l54 * y5) / l44;
    const y3 = (z3 - l43 * y4 - l53 * y5) / l33;
    const y2 = (z2 - l32 * y3 - l42 * y4 - l52 * y5) / l22;
    const y1 = (z1 - l21 * y2 - l31 * y3 - l41 * y4 - l51 * y5) / l11;
    const y0 = (z0 - l10 * y1 - l20 * y2 - l30 * y3 - l40 * y4 - l50 * y5) / l00;
    y[0] = y0; y[1] = y1; y[2] = y2; y[3] = y3; y[4] = y4; y[5] = y5;
  }

  const x1 = t.x1, x2 = t.x2;
  let a0 = x1[0]!, a1 = x1[1]!, a2 = x1[2]!, a3 = x1[3]!, a4 = x1[4]!, a5 = x1[5]!;
  let b0 = x2[0]!, b1 = x2[1]!, b2 = x2[2]!, b3 = x2[3]!, b4 = x2[4]!, b5 = x2[5]!;
  const tol = 1e-13 * trace;
  for (let it = 1; it <= t.maxIterations; it++) {
    // y1 = (G + δI)⁻¹ x1, y2 = (G + δI)⁻¹ x2: forward (L z = x) and back (Lᵀ y = z) substitution.
    const u0 = a0 / l00, v0 = b0 / l00;
    const u1 = (a1 - l10 * u0) / l11, v1 = (b1 - l10 * v0) / l11;
    const u2 = (a2 - l20 * u0 - l21 * u1) / l22, v2 = (b2 - l20 * v0 - l21 * v1) / l22;
    const u3 = (a3 - l30 * u0 - l31 * u1 - l32 * u2) / l33;
    const v3 = (b3 - l30 * v0 - l31 * v1 - l32 * v2) / l33;
    const u4 = (a4 - l40 * u0 - l41 * u1 - l42 * u2 - l43 * u3) / l44;
    const v4 = (b4 - l40 * v0 - l41 * v1 - l42 * v2 - l43 * v3) / l44;
    const u5 = (a5 - l50 * u0 - l51 * u1 - l52 * u2 - l53 * u3 - l54 * u4) / l55;
    const v5 = (b5 - l50 * v0 - l51 * v1 - l52 * v2 - l53 * v3 - l54 * v4) / l55;
    let p5 = u5 / l55, q5 = v5 / l55;
    let p4 = (u4 - l54 * p5) / l44, q4 = (v4 - l54 * q5) / l44;
    let p3 = (u3 - l43 * p4 - l53 * p5) / l33, q3 = (v3 - l43 * q4 - l53 * q5) / l33;
    let p2 = (u2 - l32 * p3 - l42 * p4 - l52 * p5) / l22;
    let q2 = (v2 - l32 * q3 - l42 * q4 - l52 * q5) / l22;
    let p1 = (u1 - l21 * p2 - l31 * p3 - l41 * p4 - l51 * p5) / l11;
    let q1 = (v1 - l21 * q2 - l31 * q3 - l41 * q4 - l51 * q5) / l11;
    let p0 = (u0 - l10 * p1 - l20 * p2 - l30 * p3 - l40 * p4 - l50 * p5) / l00;
    let q0 = (v0 - l10 * q1 - l20 * q2 - l30 * q3 - l40 * q4 - l50 * q5) / l00;
    // Orthonormalise (modified Gram–Schmidt): p = y1/n1, q = (y2 − d·p)/n2.
    let n1 = 0 + p0 * p0 + p1 * p1 + p2 * p2 + p3 * p3 + p4 * p4 + p5 * p5;
    n1 = Math.sqrt(n1);
    if (!(n1 > 0) || !(n1 < Infinity)) break;
    p0 = p0 / n1; p1 = p1 / n1; p2 = p2 / n1; p3 = p3 / n1; p4 = p4 / n1; p5 = p5 / n1;
    const dd = 0 + p0 * q0 + p1 * q1 + p2 * q2 + p3 * q3 + p4 * q4 + p5 * q5;
    q0 = q0 - dd * p0; q1 = q1 - dd * p1; q2 = q2 - dd * p2; q3 = q3 - dd * p3; q4 = q4 - dd * p4; q5 = q5 - dd * p5;
    let n2 = 0 + q0 * q0 + q1 * q1 + q2 * q2 + q3 * q3 + q4 * q4 + q5 * q5;
    n2 = Math.sqrt(n2);
    if (!(n2 > 1e-8)) break;
    q0 = q0 / n2; q1 = q1 / n2; q2 = q2 / n2; q3 = q3 / n2; q4 = q4 / n2; q5 = q5 / n2;
    // Rayleigh–Ritz without a product with G (see estimateSigmaMin): G p = (x1 − δ·n1·p)/n1,
    // G q = (x2 − δ·(n2·q + d·p) − d·G p)/n2.
    const e0 = (a0 - delta * p0 * n1) / n1, e1 = (a1 - delta * p1 * n1) / n1, e2 = (a2 - delta * p2 * n1) / n1;
    const e3 = (a3 - delta * p3 * n1) / n1, e4 = (a4 - delta * p4 * n1) / n1, e5 = (a5 - delta * p5 * n1) / n1;
    const f0 = (b0 - delta * (q0 * n2 + dd * p0) - dd * e0) / n2;
    const f1 = (b1 - delta * (q1 * n2 + dd * p1) - dd * e1) / n2;
    const f2 = (b2 - delta * (q2 * n2 + dd * p2) - dd * e2) / n2;
    const f3 = (b3 - delta * (q3 * n2 + dd * p3) - dd * e3) / n2;
    const f4 = (b4 - delta * (q4 * n2 + dd * p4) - dd * e4) / n2;
    const f5 = (b5 - delta * (q5 * n2 + dd * p5) - dd * e5) / n2;
    const h11 = 0 + p0 * e0 + p1 * e1 + p2 * e2 + p3 * e3 + p4 * e4 + p5 * e5;
    const h12 = 0 + p0 * f0 + p1 * f1 + p2 * f2 + p3 * f3 + p4 * f4 + p5 * f5;
    const h22 = 0 + q0 * f0 + q1 * f1 + q2 * f2 + q3 * f3 + q4 * f4 + q5 * f5;
    // 2x2 Jacobi rotation diagonalising [[h11, h12], [h12, h22]] (GVL 2013, Alg. 8.5.1).
    let c = 1, s = 0;
    if (h12 !== 0) {
      const tau = (h22 - h11) / (2 * h12);
      const tt = (tau >= 0 ? 1 : -1) / (Math.abs(tau) + Math.sqrt(1 + tau * tau));
      c = 1 / Math.sqrt(1 + tt * tt);
      s = tt * c;
    }
    const mua = c * c * h11 - 2 * c * s * h12 + s * s * h22;
    const mub = s * s * h11 + 2 * c * s * h12 + c * c * h22;
    let ca: number, sa: number, cb: number, sb: number, mu1: number, mu2: number;
    if (mua <= mub) {
      ca = c; sa = -s; cb = s; sb = c; mu1 = mua; mu2 = mub;
    } else {
      ca = s; sa = c; cb = c; sb = -s; mu1 = mub; mu2 = mua;
    }
    a0 = ca * p0 + sa * q0; a1 = ca * p1 + sa * q1; a2 = ca * p2 + sa * q2;
    a3 = ca * p3 + sa * q3; a4 = ca * p4 + sa * q4; a5 = ca * p5 + sa * q5;
    b0 = cb * p0 + sb * q0; b1 = cb * p1 + sb * q1; b2 = cb * p2 + sb * q2;
    b3 = cb * p3 + sb * q3; b4 = cb * p4 + sb * q4; b5 = cb * p5 + sb * q5;
    x1[0] = a0; x1[1] = a1; x1[2] = a2; x1[3] = a3; x1[4] = a4; x1[5] = a5;
    x2[0] = b0; x2[1] = b1; x2[2] = b2; x2[3] = b3; x2[4] = b4; x2[5] = b5;
    const r0 = ca * e0 + sa * f0 - mu1 * a0, r1 = ca * e1 + sa * f1 - mu1 * a1, r2 = ca * e2 + sa * f2 - mu1 * a2;
    const r3 = ca * e3 + sa * f3 - mu1 * a3, r4 = ca * e4 + sa * f4 - mu1 * a4, r5 = ca * e5 + sa * f5 - mu1 * a5;
    const res = Math.sqrt(0 + r0 * r0 + r1 * r1 + r2 * r2 + r3 * r3 + r4 * r4 + r5 * r5);
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
  // Element by element: for six numbers a TypedArray.set call costs more than the copy.
  const k = from.k, x1 = from.x1, x2 = from.x2, y1 = to.x1, y2 = to.x2;
  for (let i = 0; i < k; i++) {
    y1[i] = x1[i]!;
    y2[i] = x2[i]!;
  }
  to.sigmaMin = from.sigmaMin;
  to.sigmaSecond = from.sigmaSecond;
  to.manipulability = from.manipulability;
  to.warm = from.warm;
  to.callsSinceRefresh = 0;
}
