/**
 * Weighted linear least squares y ≈ X·β with weights w_i = 1/σ_i², for the
 * run-level models with several regressors (configuration offsets with a drift,
 * period against amplitude and temperature). The normal matrix XᵀWX is
 * inverted by linalg.ts's equilibrated Cholesky, so columns of very different
 * scale (indicators beside kelvins beside radians) do not spoil it. The
 * normal equations square the design's condition number, so the solution is
 * refined once on its own residuals (checked on NIST StRD Wampler1 and against
 * ml-matrix's QR in test/analysis/weighted-least-squares.test.ts). The
 * covariance returned is the plain (XᵀWX)⁻¹: callers decide how to scale it
 * for overlapping windows and excess scatter.
 */
import { spdInverse } from './linalg.js';

/** A weighted least-squares solution. */
export interface WlsFit {
  /** coefficients, one per column */
  beta: Float64Array;
  /** (XᵀWX)⁻¹, p×p row major: the covariance of β when the σ's are right and the points independent */
  cov: Float64Array;
  /** Σ w·(y − X·β)² */
  chi2: number;
  /** rows used and columns */
  n: number;
  p: number;
}

/**
 * Solve for β. `X` is n×p row major; a row with a non-finite entry or weight
 * ≤ 0 is left out. Null with no more rows than columns, or a singular XᵀWX.
 */
export function weightedLeastSquares(X: ArrayLike<number>, p: number, y: ArrayLike<number>, w: ArrayLike<number>): WlsFit | null {
  const n = y.length;
  if (X.length !== n * p) throw new RangeError(`weightedLeastSquares: X has ${X.length} entries, need ${n}×${p}`);
  if (w.length !== n) throw new RangeError(`weightedLeastSquares: ${w.length} weights for ${n} points`);
  const A = new Float64Array(p * p), b = new Float64Array(p);
  const use = new Uint8Array(n);
  let m = 0;
  for (let i = 0; i < n; i++) {
    const wi = w[i], yi = y[i], o = i * p;
    if (!(wi > 0) || !Number.isFinite(wi) || !Number.isFinite(yi)) continue;
    let finite = true;
    for (let a = 0; a < p; a++) if (!Number.isFinite(X[o + a])) { finite = false; break; }
    if (!finite) continue;
    use[i] = 1;
    m++;
    for (let a = 0; a < p; a++) {
      const xa = wi * X[o + a];
      b[a] += xa * yi;
      for (let c = 0; c <= a; c++) A[a * p + c] += xa * X[o + c];
    }
  }
  if (m <= p) return null;
  for (let a = 0; a < p; a++) for (let c = a + 1; c < p; c++) A[a * p + c] = A[c * p + a];
  const cov = spdInverse(A, p);
  if (!cov) return null;
  const beta = new Float64Array(p);
  const solve = (rhs: Float64Array): void => {
    for (let a = 0; a < p; a++) {
      let s = 0;
      for (let c = 0; c < p; c++) s += cov[a * p + c] * rhs[c];
      beta[a] += s;
    }
  };
  solve(b);
  // one step of iterative refinement on the residuals: the normal equations square the condition
  // number, and refining recovers most of the digits that costs (NIST Wampler1: 4e-5 → 1e-11)
  b.fill(0);
  for (let i = 0; i < n; i++) {
    if (!use[i]) continue;
    let f = 0;
    for (let a = 0; a < p; a++) f += X[i * p + a] * beta[a];
    const r = w[i] * (y[i] - f);
    for (let a = 0; a < p; a++) b[a] += X[i * p + a] * r;
  }
  solve(b);
  let chi2 = 0;
  for (let i = 0; i < n; i++) {
    if (!use[i]) continue;
    let f = 0;
    for (let a = 0; a < p; a++) f += X[i * p + a] * beta[a];
    chi2 += w[i] * (y[i] - f) ** 2;
  }
  return { beta, cov, chi2, n: m, p };
}
