import { describe, expect, it } from 'vitest';
import { Matrix, inverse } from 'ml-matrix';
import { fitConfigurations } from '../../src/analysis/configuration-fit.js';
import { normals } from '../helpers/blocks.js';

/** Windows every 60 s over `hours`, configurations alternating every `every_s`, segment = index of the stretch. */
function layout(hours: number, every_s: number) {
  const t: number[] = [], config: number[] = [], segment: number[] = [];
  for (let x = 30; x < hours * 3600; x += 60) {
    const k = Math.floor(x / every_s);
    t.push(x); segment.push(k); config.push(k % 2);
  }
  return { t, config, segment };
}

describe('fitConfigurations', () => {
  it('offsets beside a quadratic drift: the criterion picks order 2 and Δ comes out within 3σ', () => {
    const g = normals(5);
    const { t, config, segment } = layout(24, 7200);
    const sigma = t.map(() => 1e-8);
    const y = t.map((x, i) => 1e-3 + 3e-7 * config[i] + 2e-10 * x + 4e-15 * x * x + 1e-8 * g());
    const f = fitConfigurations({ t_s: t, y, sigma, config, segment })!;
    expect(f.model.kind).toBe('polynomial');
    expect(f.model.order).toBe(2);
    expect(f.model.criterion).toBe('BIC');
    const d = f.levels[1] - f.levels[0], s = Math.sqrt(f.levelCov[3] + f.levelCov[0] - 2 * f.levelCov[1]);
    expect(Math.abs(d - 3e-7) / s).toBeLessThan(3);
    // independent white noise with honest σ's: both Birge ratios near 1
    expect(f.birge_windows).toBeGreaterThan(0.9);
    expect(f.birge_windows).toBeLessThan(1.1);
    expect(f.birge_segments).not.toBeNull();
  });

  it('σ of Δ is the straight propagation (XᵀWX)⁻¹ times the reported scale², checked with ml-matrix', () => {
    const g = normals(6);
    const { t, config, segment } = layout(12, 3600);
    const sigma = t.map((_, i) => 2e-8 * (1 + (i % 3)));
    const y = t.map((x, i) => 5e-7 * config[i] - 1e-10 * x + sigma[i] * g());
    const f = fitConfigurations({ t_s: t, y, sigma, config, segment })!;
    expect(f.model.kind).toBe('polynomial');
    // the design the fit chose: indicators and Legendre P_1 … P_K on the span
    const K = f.model.order, n = t.length, tm = (t[0] + t[n - 1]) / 2, h = (t[n - 1] - t[0]) / 2;
    const P = (u: number, k: number): number => (k === 0 ? 1 : k === 1 ? u : ((2 * k - 1) * u * P(u, k - 1) - (k - 1) * P(u, k - 2)) / k);
    const X = new Matrix(n, 2 + K);
    for (let i = 0; i < n; i++) {
      X.set(i, config[i], 1 / sigma[i]);
      for (let k = 1; k <= K; k++) X.set(i, 1 + k, P((t[i] - tm) / h, k) / sigma[i]);
    }
    const C = inverse(X.transpose().mmul(X));
    const varD = C.get(0, 0) + C.get(1, 1) - 2 * C.get(0, 1);
    const s = Math.sqrt(f.levelCov[3] + f.levelCov[0] - 2 * f.levelCov[1]);
    expect(s / (Math.sqrt(varD) * f.inflation)).toBeCloseTo(1, 6);
  });

  it('a settling fibre: logarithmic creep wins, with t_c near the truth', () => {
    const g = normals(7);
    const { t, config, segment } = layout(24, 5400);
    const sigma = t.map(() => 3e-8);
    const y = t.map((x, i) => 2e-7 * config[i] + 5e-5 * Math.log1p(x / 4000) + 3e-8 * g());
    const f = fitConfigurations({ t_s: t, y, sigma, config, segment }, { logCreep: true, creepStart_s: 0 })!;
    expect(f.model.kind).toBe('log-creep');
    expect(f.model.converged).toBe(true);
    expect(Math.abs(f.model.t_c_s! - 4000)).toBeLessThan(3 * f.model.t_c_sigma_s!);
    expect(Math.abs(f.levels[1] - f.levels[0] - 2e-7)).toBeLessThan(3 * Math.sqrt(f.levelCov[3] + f.levelCov[0] - 2 * f.levelCov[1]));
  });

  it('a nuisance term is kept when it explains the data, and the levels refer to its mean', () => {
    const g = normals(8);
    const { t, config, segment } = layout(24, 7200);
    const temp = t.map((x) => 21 + 0.5 * Math.sin((2 * Math.PI * x) / 50000));
    const sigma = t.map(() => 1e-8);
    const y = t.map((_, i) => 1e-7 * config[i] + 4e-7 * (temp[i] - 21) + 1e-8 * g());
    const f = fitConfigurations({ t_s: t, y, sigma, config, segment, extras: [{ name: 'temperature', values: temp }] })!;
    expect(f.model.extras).toEqual(['temperature']);
    expect(Math.abs(f.extras.temperature.value - 4e-7)).toBeLessThan(3 * f.extras.temperature.sigma);
  });

  it('with too few segments the windows\' Birge ratio (at least 1) stands in for the segments\'', () => {
    const g = normals(9);
    const { t, config, segment } = layout(4, 7200);
    const y = t.map((_, i) => 1e-7 * config[i] + 1e-8 * g());
    const f = fitConfigurations({ t_s: t, y, sigma: t.map(() => 1e-8), config, segment })!;
    expect(f.birge_segments).toBeNull();
    expect(f.inflation).toBe(Math.max(1, f.birge_windows));
    expect(fitConfigurations({ t_s: [1], y: [1], sigma: [1], config: [0], segment: [0] })).toBeNull();
  });
});
