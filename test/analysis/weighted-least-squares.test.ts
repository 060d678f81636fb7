import { describe, expect, it } from 'vitest';
import { Matrix, QrDecomposition, inverse } from 'ml-matrix';
import * as ss from 'simple-statistics';
import { weightedLeastSquares } from '../../src/analysis/weighted-least-squares.js';
import { normals } from '../helpers/blocks.js';

describe('weightedLeastSquares', () => {
  it('NIST StRD Wampler1 (y = 1 + x + … + x⁵, x = 0 … 20): every certified coefficient is 1, residual 0', () => {
    // NIST Statistical Reference Datasets, linear regression, "Wampler1" (higher difficulty): the data are the
    // polynomial itself, so the certified values are exactly 1 and the residual standard deviation 0
    const x = Array.from({ length: 21 }, (_, i) => i);
    const y = x.map((v) => 1 + v + v ** 2 + v ** 3 + v ** 4 + v ** 5);
    const X = x.flatMap((v) => [1, v, v ** 2, v ** 3, v ** 4, v ** 5]);
    const f = weightedLeastSquares(X, 6, y, y.map(() => 1))!;
    // the normal equations alone got the intercept to 4e-5 here; with one refinement step, 1e-11
    for (const b of f.beta) expect(b).toBeCloseTo(1, 9);
    expect(f.chi2 / Math.max(...y) ** 2).toBeLessThan(1e-20);
  });

  it('agrees with ml-matrix QR on the weighted problem and with simple-statistics on a straight line', () => {
    const g = normals(3);
    const n = 400, p = 4;
    const X: number[] = [], y: number[] = [], w: number[] = [];
    for (let i = 0; i < n; i++) {
      // columns of very different scale: an indicator, kelvins, radians, seconds
      const row = [i % 3 === 0 ? 1 : 0, 20 + g(), 1e-3 * g(), 3600 * i];
      X.push(...row);
      const s = 1e-6 * (1 + (i % 5));
      y.push(2e-6 * row[0] + 3e-7 * row[1] + 0.02 * row[2] + 1e-12 * row[3] + s * g());
      w.push(1 / (s * s));
    }
    const f = weightedLeastSquares(X, p, y, w)!;
    // reference: QR of the row-scaled system √w·X β = √w·y (ml-matrix), covariance (XᵀWX)⁻¹ by its own inverse
    const A = new Matrix(n, p), b = new Matrix(n, 1);
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < p; j++) A.set(i, j, Math.sqrt(w[i]) * X[i * p + j]);
      b.set(i, 0, Math.sqrt(w[i]) * y[i]);
    }
    const ref = new QrDecomposition(A).solve(b);
    const cov = inverse(A.transpose().mmul(A));
    for (let j = 0; j < p; j++) {
      expect(Math.abs(f.beta[j] - ref.get(j, 0))).toBeLessThan(1e-9 * Math.sqrt(cov.get(j, j)) + 1e-12 * Math.abs(ref.get(j, 0)));
      expect(f.cov[j * p + j] / cov.get(j, j)).toBeCloseTo(1, 8);
    }
    const line = ss.linearRegression([[1, 2.5], [2, 3.9], [3, 6.2], [4, 8.1], [5, 9.8]]);
    const fl = weightedLeastSquares([1, 1, 1, 2, 1, 3, 1, 4, 1, 5], 2, [2.5, 3.9, 6.2, 8.1, 9.8], [1, 1, 1, 1, 1])!;
    expect(fl.beta[1]).toBeCloseTo(line.m, 12);
    expect(fl.beta[0]).toBeCloseTo(line.b, 12);
  });

  it('leaves out rows with a non-finite entry or weight ≤ 0; null when singular or too few rows', () => {
    const f = weightedLeastSquares([1, 0, 1, 1, 1, 2, 1, NaN, 1, 3], 2, [1, 2, 3, 99, 4], [1, 1, 1, 1, 0])!;
    expect(f.n).toBe(3);
    expect(f.beta[1]).toBeCloseTo(1, 12);
    expect(weightedLeastSquares([1, 2, 1, 2, 1, 2], 2, [1, 2, 3], [1, 1, 1])).toBeNull();
    expect(weightedLeastSquares([1, 1], 2, [1], [1])).toBeNull();
    expect(() => weightedLeastSquares([1, 2, 3], 2, [1, 2], [1, 1])).toThrow(/X has 3 entries/);
  });
});
