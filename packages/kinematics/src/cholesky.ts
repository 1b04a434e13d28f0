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

/** Solves L Lᵀ x = b in place (b becomes x). */
export function choleskySolveInPlace(L: ArrayLike<number>, k: number, b: Float64Array): void {
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
 * Gram matrix of the short side: G = J Jᵀ (rows x rows) when rows ≤ cols, else G = Jᵀ J (cols x cols).
 * Returns its size k = min(rows, cols). Both have the squared singular values of J as eigenvalues.
 */
export function gramInto(J: ArrayLike<number>, rows: number, cols: number, G: Float64Array): number {
  if (rows <= cols) {
    for (let i = 0; i < rows; i++) {
      for (let j = i; j < rows; j++) {
        let s = 0;
        for (let c = 0; c < cols; c++) s += J[i * cols + c]! * J[j * cols + c]!;
        G[i * rows + j] = s;
        G[j * rows + i] = s;
      }
    }
    return rows;
  }
  for (let i = 0; i < cols; i++) {
    for (let j = i; j < cols; j++) {
      let s = 0;
      for (let r = 0; r < rows; r++) s += J[r * cols + i]! * J[r * cols + j]!;
      G[i * cols + j] = s;
      G[j * cols + i] = s;
    }
  }
  return cols;
}
