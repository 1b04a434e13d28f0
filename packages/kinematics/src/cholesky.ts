/**
 * Cholesky factorisation and solves for small symmetric positive definite systems (Golub & Van Loan,
 * Matrix Computations, 4th ed. 2013, sect. 4.2). Matrices are row-major k x k. Allocation-free.
 */

/**
 * L Lᵀ = A (lower triangle of L written, strict upper set to 0). Returns false, leaving L partly written,
 * when a pivot is not clearly positive (pivot ≤ 1e-15 · A_jj, or not finite): A is then singular or
 * indefinite to working precision.
 */
export function choleskyInto(A: ArrayLike<number>, k: number, L: Float64Array): boolean {
  if (k === 6) return cholesky6Into(A, L);
  return choleskyLoopInto(A, k, L);
}

/**
 * choleskyInto's loop, for any k (internal: choleskyInto runs it for k ≠ 6; the test that pins cholesky6Into
 * to it runs it for k = 6). L may be A (in place): each entry of A's lower triangle is read before its
 * place in L is written, and the strict upper triangle is not read.
 */
export function choleskyLoopInto(A: ArrayLike<number>, k: number, L: Float64Array): boolean {
  for (let j = 0; j < k; j++) {
    let d = A[j * k + j]!;
    const ajj = d;
    for (let p = 0; p < j; p++) d -= L[j * k + p]! * L[j * k + p]!;
    if (!(d > 1e-15 * ajj) || !(d < Infinity)) return false;
    const ljj = Math.sqrt(d);
    L[j * k + j] = ljj;
    const inv = 1 / ljj;
    for (let i = j + 1; i < k; i++) {
      let s = A[i * k + j]!;
      for (let p = 0; p < j; p++) s -= L[i * k + p]! * L[j * k + p]!;
      L[i * k + j] = s * inv;
      L[j * k + i] = 0;
    }
  }
  return true;
}

/**
 * choleskyInto for k = 6 (the Gram matrix J Jᵀ of every arm with six or more joints), written out with
 * the factor in locals. Same operations in the same order as the loop (no fused multiply-add in JS), so
 * the factor is bit-identical; it only drops the index arithmetic and loop overhead (derived).
 */
export function cholesky6Into(A: ArrayLike<number>, L: Float64Array): boolean {
  // Column 0.
  let d = A[0]!;
  let ajj = d;
  if (!(d > 1e-15 * ajj) || !(d < Infinity)) return false;
  const l00 = Math.sqrt(d);
  let inv = 1 / l00;
  const l10 = A[6]! * inv, l20 = A[12]! * inv, l30 = A[18]! * inv, l40 = A[24]! * inv, l50 = A[30]! * inv;
  // Column 1.
  d = A[7]!;
  ajj = d;
  d -= l10 * l10;
  if (!(d > 1e-15 * ajj) || !(d < Infinity)) return false;
  const l11 = Math.sqrt(d);
  inv = 1 / l11;
  const l21 = (A[13]! - l20 * l10) * inv;
  const l31 = (A[19]! - l30 * l10) * inv;
  const l41 = (A[25]! - l40 * l10) * inv;
  const l51 = (A[31]! - l50 * l10) * inv;
  // Column 2.
  d = A[14]!;
  ajj = d;
  d -= l20 * l20; d -= l21 * l21;
  if (!(d > 1e-15 * ajj) || !(d < Infinity)) return false;
  const l22 = Math.sqrt(d);
  inv = 1 / l22;
  const l32 = (A[20]! - l30 * l20 - l31 * l21) * inv;
  const l42 = (A[26]! - l40 * l20 - l41 * l21) * inv;
  const l52 = (A[32]! - l50 * l20 - l51 * l21) * inv;
  // Column 3.
  d = A[21]!;
  ajj = d;
  d -= l30 * l30; d -= l31 * l31; d -= l32 * l32;
  if (!(d > 1e-15 * ajj) || !(d < Infinity)) return false;
  const l33 = Math.sqrt(d);
  inv = 1 / l33;
  const l43 = (A[27]! - l40 * l30 - l41 * l31 - l42 * l32) * inv;
  const l53 = (A[33]! - l50 * l30 - l51 * l31 - l52 * l32) * inv;
  // Column 4.
  d = A[28]!;
  ajj = d;
  d -= l40 * l40; d -= l41 * l41; d -= l42 * l42; d -= l43 * l43;
  if (!(d > 1e-15 * ajj) || !(d < Infinity)) return false;
  const l44 = Math.sqrt(d);
  inv = 1 / l44;
  const l54 = (A[34]! - l50 * l40 - l51 * l41 - l52 * l42 - l53 * l43) * inv;
  // Column 5.
  d = A[35]!;
  ajj = d;
  d -= l50 * l50; d -= l51 * l51; d -= l52 * l52; d -= l53 * l53; d -= l54 * l54;
  if (!(d > 1e-15 * ajj) || !(d < Infinity)) return false;
  const l55 = Math.sqrt(d);
  L[0] = l00; L[1] = 0; L[2] = 0; L[3] = 0; L[4] = 0; L[5] = 0;
  L[6] = l10; L[7] = l11; L[8] = 0; L[9] = 0; L[10] = 0; L[11] = 0;
  L[12] = l20; L[13] = l21; L[14] = l22; L[15] = 0; L[16] = 0; L[17] = 0;
  L[18] = l30; L[19] = l31; L[20] = l32; L[21] = l33; L[22] = 0; L[23] = 0;
  L[24] = l40; L[25] = l41; L[26] = l42; L[27] = l43; L[28] = l44; L[29] = 0;
  L[30] = l50; L[31] = l51; L[32] = l52; L[33] = l53; L[34] = l54; L[35] = l55;
  return true;
}

/** Solves L Lᵀ x = b in place (b becomes x). */
export function choleskySolveInPlace(L: ArrayLike<number>, k: number, b: Float64Array): void {
  if (k === 6) choleskySolve6InPlace(L, b);
  else choleskySolveLoopInPlace(L, k, b);
}

/** choleskySolveInPlace's loop, for any k (internal; as choleskyLoopInto). */
export function choleskySolveLoopInPlace(L: ArrayLike<number>, k: number, b: Float64Array): void {
  for (let i = 0; i < k; i++) {
    let s = b[i]!;
    for (let p = 0; p < i; p++) s -= L[i * k + p]! * b[p]!;
    b[i] = s / L[i * k + i]!;
  }
  for (let i = k - 1; i >= 0; i--) {
    let s = b[i]!;
    for (let p = i + 1; p < k; p++) s -= L[p * k + i]! * b[p]!;
    b[i] = s / L[i * k + i]!;
  }
}

/**
 * choleskySolveInPlace for k = 6, written out (forward then back substitution, same operation order as
 * the loop, so bit-identical results).
 */
export function choleskySolve6InPlace(L: ArrayLike<number>, b: Float64Array): void {
  const l00 = L[0]!;
  const l10 = L[6]!, l11 = L[7]!;
  const l20 = L[12]!, l21 = L[13]!, l22 = L[14]!;
  const l30 = L[18]!, l31 = L[19]!, l32 = L[20]!, l33 = L[21]!;
  const l40 = L[24]!, l41 = L[25]!, l42 = L[26]!, l43 = L[27]!, l44 = L[28]!;
  const l50 = L[30]!, l51 = L[31]!, l52 = L[32]!, l53 = L[33]!, l54 = L[34]!, l55 = L[35]!;
  // L z = b.
  const z0 = b[0]! / l00;
  const z1 = (b[1]! - l10 * z0) / l11;
  const z2 = (b[2]! - l20 * z0 - l21 * z1) / l22;
  const z3 = (b[3]! - l30 * z0 - l31 * z1 - l32 * z2) / l33;
  const z4 = (b[4]! - l40 * z0 - l41 * z1 - l42 * z2 - l43 * z3) / l44;
  const z5 = (b[5]! - l50 * z0 - l51 * z1 - l52 * z2 - l53 * z3 - l54 * z4) / l55;
  // Lᵀ x = z.
  const x5 = z5 / l55;
  const x4 = (z4 - l54 * x5) / l44;
  const x3 = (z3 - l43 * x4 - l53 * x5) / l33;
  const x2 = (z2 - l32 * x3 - l42 * x4 - l52 * x5) / l22;
  const x1 = (z1 - l21 * x2 - l31 * x3 - l41 * x4 - l51 * x5) / l11;
  const x0 = (z0 - l10 * x1 - l20 * x2 - l30 * x3 - l40 * x4 - l50 * x5) / l00;
  b[0] = x0; b[1] = x1; b[2] = x2; b[3] = x3; b[4] = x4; b[5] = x5;
}

/**
 * Gram matrix of the short side: G = J Jᵀ (rows x rows) when rows ≤ cols, else G = Jᵀ J (cols x cols).
 * Returns its size k = min(rows, cols). Both have the squared singular values of J as eigenvalues.
 */
export function gramInto(J: ArrayLike<number>, rows: number, cols: number, G: Float64Array): number {
  if (rows === 6 && cols >= 6) {
    gram6Into(J, cols, G);
    return 6;
  }
  return gramLoopInto(J, rows, cols, G);
}

/**
 * gramInto's loop, for any shape (internal: gramInto runs it unless J is 6 x ≥6; the test that pins
 * gram6Into to it runs it there too). The short side's k vectors of length m are J's rows (rows ≤ cols) or
 * its columns, read with strides: vector i, entry c at J[i·step + c·stride]; G_ij = Σ_c J_ic·J_jc in c order.
 */
export function gramLoopInto(J: ArrayLike<number>, rows: number, cols: number, G: Float64Array): number {
  const isWide = rows <= cols;
  const k = isWide ? rows : cols, m = isWide ? cols : rows;
  const step = isWide ? cols : 1, stride = isWide ? 1 : cols;
  for (let i = 0; i < k; i++) {
    for (let j = i; j < k; j++) {
      let s = 0;
      for (let c = 0; c < m; c++) s += J[i * step + c * stride]! * J[j * step + c * stride]!;
      G[i * k + j] = s;
      G[j * k + i] = s;
    }
  }
  return k;
}

/**
 * G = J Jᵀ (6x6) for a 6 x cols Jacobian, cols ≥ 6: one pass over the columns accumulating the 21
 * distinct entries of the symmetric G in locals (instead of 21 strided dot products). Each entry adds
 * its terms in the same column order as gramInto's loop, so G is bit-identical (derived).
 */
export function gram6Into(J: ArrayLike<number>, cols: number, G: Float64Array): void {
  let s00 = 0, s10 = 0, s11 = 0, s20 = 0, s21 = 0, s22 = 0, s30 = 0, s31 = 0, s32 = 0, s33 = 0;
  let s40 = 0, s41 = 0, s42 = 0, s43 = 0, s44 = 0, s50 = 0, s51 = 0, s52 = 0, s53 = 0, s54 = 0, s55 = 0;
  const c2 = 2 * cols, c3 = 3 * cols, c4 = 4 * cols, c5 = 5 * cols;
  for (let c = 0; c < cols; c++) {
    const j0 = J[c]!, j1 = J[cols + c]!, j2 = J[c2 + c]!, j3 = J[c3 + c]!, j4 = J[c4 + c]!, j5 = J[c5 + c]!;
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
