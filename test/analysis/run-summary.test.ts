import { describe, expect, it } from 'vitest';
import { linearRegression, sampleStandardDeviation, weightedMean as ssWeightedMean } from 'simple-statistics';
import { summariseWindows } from '../../src/analysis/run-summary.js';
import { weightedLine, weightedMean } from '../../src/analysis/weighted-stats.js';
import { emptyResult } from '../../src/analysis/window-analysis.js';

describe('run summary', () => {
  it('weighted mean matches simple-statistics; σ is √overlap/√Σw without excess scatter', () => {
    const v = [1, 1.00001, 0.99999, 1.000005], s = [1e-5, 2e-5, 1e-5, 4e-5];
    const m = weightedMean(v, s, { overlap: 4 })!;
    expect(m.mean).toBeCloseTo(ssWeightedMean(v, s.map((x) => 1 / (x * x))), 14);
    const sw = s.reduce((a, x) => a + 1 / (x * x), 0);
    expect(m.sigma).toBeCloseTo(Math.sqrt(4 / sw), 14); // scatter within the error bars here
  });
  it('trusts the scatter when it exceeds the error bars (Birge ratio), still inflated for overlap', () => {
    const v = [1, 3, 1, 3, 1, 3], s = v.map(() => 0.1);
    const m = weightedMean(v, s, { overlap: 4 })!;
    expect(m.sigma).toBeCloseTo((Math.sqrt(4) * sampleStandardDeviation(v)) / Math.sqrt(v.length), 12);
  });
  it('weighted slope with equal σ equals the least-squares line of simple-statistics', () => {
    const x = [0, 1, 2, 3, 4, 5, 6], y = [0.1, 0.32, 0.49, 0.71, 0.9, 1.12, 1.29], s = x.map(() => 1);
    expect(weightedLine(x, y, s)!.slope).toBeCloseTo(linearRegression(x.map((xi, i) => [xi, y[i]])).m, 12);
  });
  it('summarises only accepted windows and streams any iterable', () => {
    const ws = [0, 1, 2, 3].map((i) => ({
      ...emptyResult({ index: i, t_start_s: i * 60, t_end_s: i * 60 + 240 }, 'ok', 100),
      period_s: 60 + i * 1e-6, period_sigma_s: 1e-5, equilibrium_rad: 1e-6 * i, equilibrium_sigma_rad: 1e-8, amplitude_rad: 1e-3,
    }));
    const bad = { ...emptyResult({ index: 4, t_start_s: 240, t_end_s: 480 }, 'did-not-converge', 100), period_s: 99, period_sigma_s: 1e-6 };
    function* gen() { yield* ws; yield bad; }
    const r = summariseWindows(gen(), 4);
    expect(r.windows).toBe(5);
    expect(r.windows_ok).toBe(4);
    expect(r.period_s!).toBeCloseTo(60 + 1.5e-6, 9);
    expect(r.equilibrium_rate_rad_per_s!).toBeCloseTo(1e-6 / 60, 12);
    expect(r.t_end_s).toBe(480);
  });
});
