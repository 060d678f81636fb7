/**
 * Small dense linear algebra on row-major Float64Arrays (n×n, n ≲ 20):
 * Cholesky factorisation and solve, and the inverse of a symmetric
 * positive-definite matrix with diagonal equilibration. Allocation-free where
 * a caller passes work arrays, so a fit loop can reuse them.
 */

/**
 * Cholesky factorisation A = L·Lᵀ in place (the lower triangle of `a` becomes
 * L; the strict upper triangle is left alone). Returns false when A is not
 * numerically positive definite.
 */
export function choleskyInPlace(a: Float64Array, n: number): boolean {
  for (let j = 0; j < n; j++) {
    let d = a[j * n + j];
    for (let k = 0; k < j; k++) d -= a[j * n + k] * a[j * n + k];
    if (!(d > 0) || !Number.isFinite(d)) return false;
    const ljj = Math.sqrt(d);
    a[j * n + j] = ljj;
    for (let i = j + 1; i < n; i++) {
      let s = a[i * n + j];
      for (let k = 0; k < j; k++) s -= a[i * n + k] * a[j * n + k];
      a[i * n + j] = s / ljj;
    }
  }
  return true;
}

/** Solve L·Lᵀ·x = b with the factor from `choleskyInPlace`; `out` may alias `b`. */
export function choleskySolve(l: Float64Array, n: number, b: ArrayLike<number>, out: Float64Array): Float64Array {
  for (let i = 0; i < n; i++) {
    let s = b[i];
    for (let k = 0; k < i; k++) s -= l[i * n + k] * out[k];
    out[i] = s / l[i * n + i];
  }
  for (let i = n - 1; i >= 0; i--) {
    let s = out[i];
    for (let k = i + 1; k < n; k++) s -= l[k * n + i] * out[k];
    out[i] = s / l[i * n + i];
  }
  return out;
}

/**
 * Inverse of a symmetric positive-definite matrix, or null when it is
 * singular to working precision. The matrix is first equilibrated
 * (D^-½·A·D^-½, D = diag A) so that badly scaled parameters do not spoil the
 * factorisation; the result is scaled back. Does not modify `a`.
 */
export function spdInverse(a: ArrayLike<number>, n: number): Float64Array | null {
  const f = equilibratedCholesky(a, n);
  if (!f) return null;
  const { l, d } = f;
  // reject near-singular: condition of the equilibrated matrix ≳ 1e15
  let minL = Infinity, maxL = 0;
  for (let i = 0; i < n; i++) { const v = l[i * n + i]; if (v < minL) minL = v; if (v > maxL) maxL = v; }
  if ((maxL / minL) ** 2 > 1e15) return null;
  const inv = new Float64Array(n * n);
  const e = new Float64Array(n);
  const col = new Float64Array(n);
  for (let j = 0; j < n; j++) {
    e.fill(0);
    e[j] = 1;
    choleskySolve(l, n, e, col);
    for (let i = 0; i < n; i++) inv[i * n + j] = col[i] * d[i] * d[j];
  }
  // symmetrise against rounding
  for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) {
    const m = 0.5 * (inv[i * n + j] + inv[j * n + i]);
    inv[i * n + j] = m; inv[j * n + i] = m;
  }
  return inv;
}

/**
 * Solve A·x = b for a symmetric positive-definite A (n×n, row major),
 * equilibrated first like `spdInverse` so badly scaled columns (seconds
 * beside unit amplitudes) do not spoil the factorisation; null when A is not
 * positive definite. Does not modify `a` or `b`.
 */
export function spdSolve(a: ArrayLike<number>, n: number, b: ArrayLike<number>): Float64Array | null {
  const f = equilibratedCholesky(a, n);
  if (!f) return null;
  const { l, d } = f;
  const rhs = Float64Array.from({ length: n }, (_, i) => b[i] * d[i]);
  const x = choleskySolve(l, n, rhs, rhs);
  for (let i = 0; i < n; i++) x[i] *= d[i];
  return x;
}

/** Cholesky factor L of D·A·D with D = diag(A)^-½, and D; null when A is not positive definite. */
function equilibratedCholesky(a: ArrayLike<number>, n: number): { l: Float64Array; d: Float64Array } | null {
  const d = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const v = a[i * n + i];
    if (!(v > 0) || !Number.isFinite(v)) return null;
    d[i] = 1 / Math.sqrt(v);
  }
  const l = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) l[i * n + j] = a[i * n + j] * d[i] * d[j];
  return choleskyInPlace(l, n) ? { l, d } : null;
}
