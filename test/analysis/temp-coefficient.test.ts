import { describe, expect, it } from 'vitest';
import * as ss from 'simple-statistics';
import { fitTempCoefficient } from '../../src/analysis/temp-coefficient.js';
import { normals } from '../helpers/blocks.js';


describe('fitTempCoefficient', () => {
  it('equal σ: slope equals simple-statistics OLS; coefficient in ppm/K recovered within 3σ', () => {
    const g = normals(1);
    const P0 = 60;
    const c = 50e-6; // 50 ppm/K
    const temp = Array.from({ length: 1440 }, (_, i) => 21 + Math.sin((2 * Math.PI * i) / 1440) + 0.02 * g());
    const per = temp.map((T) => P0 * (1 + c * (T - 21)) + P0 * 1e-5 * g());
    const fit = fitTempCoefficient(temp, per, per.map(() => P0 * 1e-5))!;
    const ols = ss.linearRegression(temp.map((T, i) => [T, per[i]]));
    expect(fit.coef_per_K * fit.period_ref_s).toBeCloseTo(ols.m, 12);
    expect(Math.abs(fit.coef_ppm_per_K - 50)).toBeLessThan(3 * fit.coef_sigma_ppm_per_K);
    expect(fit.coef_sigma_ppm_per_K).toBeLessThan(1);
    expect(fit.temp_span_K).toBeGreaterThan(1.9);
    // the corrected series has the temperature swing removed
    const corr = per.map((p, i) => p * (1 - fit.coef_per_K * (temp[i] - 21)));
    expect(ss.standardDeviation(corr) / P0).toBeLessThan(2e-5);
    expect(ss.standardDeviation(per) / P0).toBeGreaterThan(3e-5);
  });

  it('weights by 1/σ²: a noisy window with a large σ barely moves the slope', () => {
    const temp = [20, 20.5, 21, 21.5, 22, 21];
    const per = temp.map((T) => 60 * (1 + 1e-4 * (T - 21)));
    const sig = per.map(() => 6e-5);
    per[5] += 0.01;
    sig[5] = 1;
    const fit = fitTempCoefficient(temp, per, sig)!;
    expect(fit.coef_ppm_per_K).toBeCloseTo(100, 0);
    const unweighted = fitTempCoefficient(temp, per, null)!;
    expect(Math.abs(unweighted.coef_ppm_per_K - 100)).toBeLessThan(1); // point at the mean temperature: no leverage
  });

  it('null without a temperature spread or with too few pairs', () => {
    expect(fitTempCoefficient([21, 21, 21], [60, 60.001, 60.002], null)).toBeNull();
    expect(fitTempCoefficient([21, 22], [60, 60.001], null)).toBeNull();
    expect(fitTempCoefficient([21, NaN, 22, 23], [60, 60, NaN, 60], null)).toBeNull();
  });
});
