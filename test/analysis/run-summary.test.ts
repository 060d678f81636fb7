import { describe, expect, it } from 'vitest';
import { linearRegression, mean, sampleStandardDeviation, weightedMean as ssWeightedMean } from 'simple-statistics';
import { summariseWindows } from '../../src/analysis/run-summary.js';
import { weightedLine, weightedMean } from '../../src/analysis/weighted-stats.js';
import { emptyResult } from '../../src/analysis/window-analysis.js';
import type { WindowResult } from '../../src/domain/window-result.js';
import { normals } from '../helpers/blocks.js';

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
    const r = summariseWindows(gen(), { overlap: 4 });
    expect(r.windows).toBe(5);
    expect(r.windows_ok).toBe(4);
    expect(r.period_s!).toBeCloseTo(60 + 1.5e-6, 9);
    expect(r.equilibrium_rate_rad_per_s!).toBeCloseTo(1e-6 / 60, 12);
    expect(r.t_end_s).toBe(480);
  });
});

describe('systematic uncertainties enter the run once', () => {
  // 1000 windows of a round tungsten fibre (invented): each window's κ carries its statistical σ only
  const n = 1000, T = 60, I = 3.6e-5, d = 25e-6, L = 0.8;
  const kappa = I * (2 * Math.PI / T) ** 2, G = (32 * kappa * L) / (Math.PI * d ** 4);
  const sK = 1e-5 * kappa; // per window
  const z = normals(5);
  const windows: WindowResult[] = Array.from({ length: n }, (_, i) => {
    const k = kappa + sK * z();
    return {
      ...emptyResult({ index: i, t_start_s: i * T, t_end_s: (i + 4) * T }, 'ok', 160),
      period_s: T, period_sigma_s: 1e-4,
      kappa_Nm_per_rad: k, kappa_sigma_Nm_per_rad: sK,
      shear_modulus_Pa: (32 * k * L) / (Math.PI * d ** 4), shear_modulus_sigma_Pa: (32 * sK * L) / (Math.PI * d ** 4),
    };
  });
  const context = { inertia_kg_m2: I, diameter_m: d, length_m: L };
  const systematics = { inertia_sigma_kg_m2: 0.005 * I, diameter_sigma_m: 0.004 * d, length_sigma_m: 1e-3 };
  const s = summariseWindows(windows, { overlap: 4, context, systematics });

  it('κ: the inertia term is not averaged down over 1000 windows', () => {
    // direct propagation: the run mean's statistical σ (plain mean of equal-σ windows, inflated by √overlap),
    // and κ·σ_I/I once, in quadrature
    const ks = windows.map((w) => w.kappa_Nm_per_rad!);
    const stat = (Math.sqrt(4) * sK) / Math.sqrt(n) * Math.max(1, sampleStandardDeviation(ks) / sK);
    expect(s.kappa_Nm_per_rad! / mean(ks)).toBeCloseTo(1, 12);
    expect(s.kappa_sigma_stat_Nm_per_rad! / stat).toBeCloseTo(1, 6);
    const direct = Math.hypot(stat, 0.005 * mean(ks));
    expect(s.kappa_sigma_Nm_per_rad! / direct).toBeCloseTo(1, 9);
    // the old way (σ_I in every window, then averaged) would give a σ about √(n/4) ≈ 16× too small
    expect(s.kappa_sigma_Nm_per_rad! / ((0.005 * kappa * 2) / Math.sqrt(n))).toBeGreaterThan(15);
    expect(s.kappa_sigma_budget).toEqual({ statistical: s.kappa_sigma_stat_Nm_per_rad! / s.kappa_Nm_per_rad!, inertia: 0.005 });
  });

  it('G: inertia, 4·σ_d/d and σ_L/L once, in quadrature with the statistical σ', () => {
    const rel = Math.hypot(0.005, 4 * 0.004, 1e-3 / L);
    expect(s.shear_modulus_Pa! / G).toBeCloseTo(1, 5);
    expect(s.shear_modulus_sigma_Pa! / Math.hypot(s.shear_modulus_sigma_stat_Pa!, rel * s.shear_modulus_Pa!)).toBeCloseTo(1, 7);
    expect(s.shear_modulus_sigma_budget!.diameter! / 0.016).toBeCloseTo(1, 7);
    expect(s.tension_share_ppm).toBeNull();
  });

  it('a load: its share of κ in ppm', () => {
    const F = 0.3 * 9.80665;
    const r = summariseWindows(windows, { overlap: 4, context: { ...context, tension_N: F }, systematics });
    // F·d²/(8L) over κ
    expect(r.tension_share_ppm! / ((F * d * d) / (8 * L) / kappa * 1e6)).toBeCloseTo(1, 4);
  });
});
