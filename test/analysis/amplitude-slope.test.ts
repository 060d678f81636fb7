/**
 * The period's amplitude slope: on the virtual balance with an anelastic fibre
 * (drivers/simulator/balance.ts: κ scaled so that the period grows by s·A, A
 * the swing's amplitude — the truth) the slope fitted to the windows of a quiet
 * decay comes out within 3σ of s; an elastic fibre gives a slope consistent with
 * 0; a temperature swing is removed with the temperature term.
 */
import { describe, expect, it } from 'vitest';
import * as ss from 'simple-statistics';
import { fitAmplitudeSlope } from '../../src/analysis/amplitude-slope.js';
import { anelasticRun, ANELASTIC, pullStats } from '../helpers/configuration-mc.js';
import { normals } from '../helpers/blocks.js';

describe('fitAmplitudeSlope', () => {
  it('one configuration, no temperature: the slope is simple-statistics\' weighted-free OLS slope for equal σ', () => {
    const g = normals(2);
    const A = Array.from({ length: 200 }, (_, i) => 5e-3 * Math.exp(-i / 80));
    const P = A.map((a) => 30 + 6 * a + 1e-5 * g());
    const f = fitAmplitudeSlope(A, P, P.map(() => 1e-5))!;
    expect(f.slope_s_per_rad).toBeCloseTo(ss.linearRegression(A.map((a, i) => [a, P[i]])).m, 9);
    expect(f.temperature_coefficient_s_per_K).toBeNull();
  });

  it('an intercept per configuration: a period step between configurations does not leak into the slope', () => {
    const g = normals(3);
    const A = Array.from({ length: 300 }, (_, i) => 5e-3 * Math.exp(-i / 100));
    const cfg = A.map((_, i) => Math.floor(i / 50) % 2);
    const P = A.map((a, i) => 30 + 2 * a + 3e-4 * cfg[i] + 1e-6 * g());
    const f = fitAmplitudeSlope(A, P, P.map(() => 1e-6), { config: cfg })!;
    expect(Math.abs(f.slope_s_per_rad - 2)).toBeLessThan(3 * f.slope_sigma_s_per_rad);
    expect(f.period_s[1] - f.period_s[0]).toBeCloseTo(3e-4, 6);
    // without the intercepts the step would bias it
    const g1 = fitAmplitudeSlope(A, P, P.map(() => 1e-6))!;
    expect(Math.abs(g1.slope_s_per_rad - 2)).toBeGreaterThan(10 * f.slope_sigma_s_per_rad);
  });

  it('an anelastic fibre on the virtual balance: the slope within 3σ of the truth over 4 seeds', async () => {
    const pulls: number[] = [];
    for (let seed = 1; seed <= 4; seed++) {
      const r = await anelasticRun(seed);
      expect(Math.abs(r.pull), `seed ${seed}: ${r.slope} ± ${r.sigma} s/rad against ${ANELASTIC.slope_s_per_rad}`).toBeLessThan(3);
      expect(r.sigma / ANELASTIC.slope_s_per_rad).toBeLessThan(0.01);
      pulls.push(r.pull);
    }
    expect(pullStats(pulls).max_abs).toBeLessThan(3);
  }, 30_000);

  it('an elastic fibre in a warming room: temperature removed, the slope consistent with 0', async () => {
    const r = await anelasticRun(5, {
      anelastic: { period_amplitude_slope_s_per_rad: 0 },
      // +100 ppm/K on a 3 K ramp-like swing over the 6 h: 300 ppm, which a decay would take for a slope
      temperature_swing: { amplitude_K: 3, period_s: 86400, period_coefficient_per_K: 1e-4 }, temperature_channel: { noise_K: 0.001 },
    });
    expect(Math.abs(r.slope)).toBeLessThan(3 * r.sigma);
  }, 20_000);
});
