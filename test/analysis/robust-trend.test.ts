import { describe, expect, it } from 'vitest';
import * as ss from 'simple-statistics';
import erfinv from '@stdlib/math-base-special-erfinv';
import { normalQuantile, robustTrend } from '../../src/analysis/robust-trend.js';
import { Rng } from '../../src/analysis/rng.js';

/** Seeded uniform (u) and standard normal (n) deviates from the project's generator. */
function rng(seed: number): { u: () => number; n: () => number } {
  const r = new Rng(seed);
  return { u: () => r.uniform(), n: () => r.normal() };
}

describe('robustTrend (Theil–Sen, Sen 1968 interval)', () => {
  it('normal quantile matches √2·erfinv(2p − 1) from @stdlib', () => {
    for (const p of [0.001, 0.025, 0.3, 0.5, 0.8, 0.975, 0.9999]) expect(normalQuantile(p)).toBeCloseTo(Math.SQRT2 * erfinv(2 * p - 1), 7);
    expect(normalQuantile(0.975)).toBeCloseTo(1.959964, 5); // common table value
  });

  it('equals a brute-force median of all pairwise slopes', () => {
    const r = rng(7);
    const t = Array.from({ length: 41 }, (_, i) => i * 60 + r.u() * 10);
    const y = t.map((x) => 3e-9 * x + 1e-7 * r.n() + (r.u() < 0.1 ? 1e-5 : 0));
    const slopes: number[] = [];
    for (let i = 0; i < t.length; i++) for (let j = i + 1; j < t.length; j++) slopes.push((y[j] - y[i]) / (t[j] - t[i]));
    const fit = robustTrend(t, y)!;
    expect(fit.slope).toBe(ss.median(slopes));
    expect(fit.n).toBe(41);
  });

  it('agrees with the OLS slope of simple-statistics on clean Gaussian data, with a comparable σ', () => {
    const r = rng(11);
    const n = 120;
    const t = Array.from({ length: n }, (_, i) => i * 60);
    const y = t.map((x) => 2e-7 + 1.4e-9 * x + 1e-7 * r.n());
    const ols = ss.linearRegression(t.map((x, i) => [x, y[i]]));
    const res = y.map((v, i) => v - (ols.m * t[i] + ols.b));
    const s = Math.sqrt(res.reduce((a, b) => a + b * b, 0) / (n - 2));
    const tm = ss.mean(t);
    const olsSigma = s / Math.sqrt(t.reduce((a, x) => a + (x - tm) ** 2, 0));
    const fit = robustTrend(t, y)!;
    expect(Math.abs(fit.slope - ols.m)).toBeLessThan(2 * olsSigma);
    // Theil–Sen's Gaussian efficiency is about 0.91–0.96 (Sen 1968), so its σ is close to OLS's
    expect(fit.slope_sigma / olsSigma).toBeGreaterThan(0.7);
    expect(fit.slope_sigma / olsSigma).toBeLessThan(1.5);
  });

  it('exact line: slope exact, interval collapses', () => {
    const t = [0, 60, 120, 180, 240, 300];
    const fit = robustTrend(t, t.map((x) => 5e-3 - 2e-9 * x))!;
    expect(Math.abs(fit.slope / -2e-9 - 1)).toBeLessThan(1e-9);
    expect(fit.slope_sigma).toBeLessThan(1e-20);
    expect(fit.intercept).toBeCloseTo(5e-3 - 2e-9 * 150, 14);
  });

  it('shrugs off 20 % outlier windows where OLS is dragged away', () => {
    const r = rng(3);
    const t = Array.from({ length: 100 }, (_, i) => i * 60);
    const y = t.map((x, i) => 1e-9 * x + 1e-8 * r.n() + (i % 5 === 0 ? 2e-5 * (i / 100) : 0));
    const fit = robustTrend(t, y)!;
    const ols = ss.linearRegression(t.map((x, i) => [x, y[i]]));
    expect(Math.abs(fit.slope - 1e-9)).toBeLessThan(5e-11);
    expect(Math.abs(ols.m - 1e-9)).toBeGreaterThan(3e-10);
  });

  it('95 % interval covers the true slope in about 95 % of seeded trials', () => {
    const r = rng(99);
    let cover = 0;
    const trials = 300;
    for (let k = 0; k < trials; k++) {
      const t = Array.from({ length: 30 }, (_, i) => i * 60);
      const y = t.map((x) => 1e-9 * x + 1e-7 * r.n());
      const fit = robustTrend(t, y)!;
      if (fit.lower <= 1e-9 && 1e-9 <= fit.upper) cover++;
    }
    expect(cover / trials).toBeGreaterThan(0.91);
    expect(cover / trials).toBeLessThan(0.99);
  });

  it('thins to maxPoints, inflates σ, and returns null on too few points', () => {
    const t = Array.from({ length: 1000 }, (_, i) => i);
    const y = t.map((x) => 2 * x + Math.sin(x));
    const a = robustTrend(t, y, { maxPoints: 200 })!;
    const b = robustTrend(t, y, { maxPoints: 200, inflation: 4 })!;
    expect(a.n).toBe(200);
    expect(a.slope).toBeCloseTo(2, 2);
    expect(b.slope_sigma).toBeCloseTo(2 * a.slope_sigma, 15);
    expect(robustTrend([1, 2], [1, 2])).toBeNull();
    expect(robustTrend([1, 1, 1], [1, 2, 3])).toBeNull();
    expect(() => robustTrend([1, 2, 3], [1, 2])).toThrow(/t has 3 points, y has 2/);
  });
});
