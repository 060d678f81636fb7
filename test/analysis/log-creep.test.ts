import { describe, expect, it } from 'vitest';
import { levenbergMarquardt } from 'ml-levenberg-marquardt';
import { creepAngle, creepRate, fitLogCreep, forecastSettle } from '../../src/analysis/log-creep.js';
import { normals } from '../helpers/blocks.js';


// synthetic creep: θ∞ = 1e-3 rad, a = 2e-5 rad, t_c = 3000 s, one window a minute for 8 h, σ = 1e-7 rad
const TRUE = { th: 1e-3, a: 2e-5, tc: 3000, t0: 1000 };
function series(seed: number, sigma = 1e-7, hours = 8) {
  const n = normals(seed);
  const t: number[] = [];
  const y: number[] = [];
  for (let s = TRUE.t0; s <= TRUE.t0 + hours * 3600; s += 60) {
    t.push(s);
    y.push(TRUE.th + TRUE.a * Math.log1p((s - TRUE.t0) / TRUE.tc) + sigma * n());
  }
  return { t, y, s: t.map(() => sigma) };
}

describe('fitLogCreep', () => {
  it('recovers the parameters of a synthetic creep within 3σ', () => {
    const { t, y, s } = series(1);
    const f = fitLogCreep(t, y, s, { t0_s: TRUE.t0 })!;
    expect(Math.abs(f.a_rad - TRUE.a)).toBeLessThan(3 * f.a_sigma_rad);
    expect(Math.abs(f.t_c_s - TRUE.tc)).toBeLessThan(3 * f.t_c_sigma_s);
    expect(Math.abs(f.theta_inf_rad - TRUE.th)).toBeLessThan(3 * f.theta_inf_sigma_rad);
    expect(f.chi2_red).toBeGreaterThan(0.8);
    expect(f.chi2_red).toBeLessThan(1.25);
    expect(f.t_c_at_bound).toBe(false);
    expect(creepRate(f, TRUE.t0 + 3600)).toBeCloseTo(TRUE.a / (TRUE.tc + 3600), 11);
    expect(creepAngle(f, TRUE.t0)).toBeCloseTo(f.theta_inf_rad, 15);
  });

  it('agrees with ml-levenberg-marquardt on the same data (independent optimiser)', () => {
    const { t, y } = series(2);
    const f = fitLogCreep(t, y, null, { t0_s: TRUE.t0 })!;
    // LM in scaled units (µrad, ks) with an analytic Jacobian (docs/dependencies.md: absolute finite-difference step)
    const xs = t.map((v) => (v - TRUE.t0) / 1000);
    const ys = y.map((v) => v * 1e6);
    const model = ([th, a, tc]: number[]) => (x: number) => th + a * Math.log1p(x / tc);
    const jac = ([, a, tc]: number[]) => (x: number) => [1, Math.log1p(x / tc), (-a * x) / (tc * (tc + x))];
    const lm = levenbergMarquardt({ x: xs, y: ys }, model, { initialValues: [1000, 10, 1], jacobianFunction: jac, maxIterations: 500, errorTolerance: 1e-12, minValues: [-1e6, -1e6, 1e-3], maxValues: [1e6, 1e6, 1e4] });
    const [th, a, tc] = lm.parameterValues;
    expect(f.a_rad * 1e6).toBeCloseTo(a, 2);
    expect(f.t_c_s / 1000).toBeCloseTo(tc, 2);
    expect(f.theta_inf_rad * 1e6).toBeCloseTo(th, 2);
  });

  it('its σ(a) matches the scatter over seeded repeats', () => {
    const as: number[] = [];
    let sig = 0;
    for (let k = 0; k < 40; k++) {
      const { t, y, s } = series(100 + k, 1e-7, 6);
      const f = fitLogCreep(t, y, s, { t0_s: TRUE.t0 })!;
      as.push(f.a_rad);
      sig += f.a_sigma_rad / 40;
    }
    const m = as.reduce((p, q) => p + q, 0) / as.length;
    const sd = Math.sqrt(as.reduce((p, q) => p + (q - m) ** 2, 0) / (as.length - 1));
    expect(sd / sig).toBeGreaterThan(0.7);
    expect(sd / sig).toBeLessThan(1.4);
  });

  it('t0 later than the onset is absorbed by t_c', () => {
    const { t, y, s } = series(5);
    const late = 1800;
    const keep = t.map((v, i) => i).filter((i) => t[i] >= TRUE.t0 + late);
    const f = fitLogCreep(keep.map((i) => t[i]), keep.map((i) => y[i]), keep.map((i) => s[i]))!;
    expect(f.t0_s).toBe(TRUE.t0 + late);
    expect(Math.abs(f.t_c_s - (TRUE.tc + late))).toBeLessThan(3 * f.t_c_sigma_s);
  });

  it('returns null with too few points', () => {
    expect(fitLogCreep([1, 2, 3, 4], [1, 2, 3, 4], null)).toBeNull();
  });
});

describe('forecastSettle', () => {
  it('t = t0 + a/threshold − t_c, checked against the true model, with a delta-method σ', () => {
    const { t, y, s } = series(9);
    const f = fitLogCreep(t, y, s, { t0_s: TRUE.t0 })!;
    const thr = 5e-6 / 3600; // 5 µrad/h
    const fc = forecastSettle(f, thr);
    const truth = TRUE.t0 + TRUE.a / thr - TRUE.tc;
    expect(fc.reliable).toBe(true);
    expect(fc.t_s).toBeCloseTo(f.t0_s + f.a_rad / thr - f.t_c_s, 6);
    expect(Math.abs(fc.t_s - truth)).toBeLessThan(3 * fc.sigma_s);
    // sanity: the fitted rate at the forecast equals the threshold
    expect(creepRate(f, fc.t_s)).toBeCloseTo(thr, 15);
    expect(fc.sigma_s).toBeGreaterThan(0);
  });

  it('flags a non-significant creep and a far extrapolation as unreliable', () => {
    const n = normals(4);
    const t = Array.from({ length: 120 }, (_, i) => i * 60);
    const flat = fitLogCreep(t, t.map(() => 1e-7 * n()), t.map(() => 1e-7))!;
    expect(forecastSettle(flat, 1e-12).reliable).toBe(false);
    const { t: t2, y, s } = series(6, 1e-7, 2);
    const f = fitLogCreep(t2, y, s, { t0_s: TRUE.t0 })!;
    const far = forecastSettle(f, 1e-14);
    expect(far.reliable).toBe(false);
    expect(far.reason).toMatch(/beyond 20×/);
    expect(() => forecastSettle(f, 0)).toThrow(/threshold_rad_per_s must be > 0/);
  });
});
