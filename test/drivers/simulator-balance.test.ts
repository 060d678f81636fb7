import { describe, expect, it } from 'vitest';
import { propagator, Balance } from '../../drivers/simulator/balance.js';
import { Rng } from '../../src/analysis/rng.js';
import { parseScenario } from '../../drivers/simulator/scenario.js';
import { simulateToArrays } from '../helpers/simulate-arrays.js';
import { K_BOLTZMANN } from '../../src/physics/constants.js';
import { thermalAngleRms } from '../../src/physics/thermal.js';
import { kappaFromPeriod } from '../../src/physics/torsion.js';

const base = (extra: Record<string, unknown> = {}) => parseScenario({
  name: 'test', duration_s: 600, sample_rate_Hz: 10, inertia_kg_m2: 3.6e-5,
  kappa_Nm_per_rad: kappaFromPeriod(3.6e-5, 10), q: 50, thermal_noise: false,
  initial: { amplitude_rad: 0.01, phase_rad: 0.7, equilibrium_rad: 0.002 }, ...extra,
});

/** Upward zero crossings of θ − θ_eq by linear interpolation, s. */
function crossings(t: Float64Array, y: Float64Array, from = 0): number[] {
  const out: number[] = [];
  for (let i = 1; i < t.length; i++) if (t[i] >= from && y[i - 1] < 0 && y[i] >= 0) out.push(t[i - 1] + (t[i] - t[i - 1]) * (-y[i - 1]) / (y[i] - y[i - 1]));
  return out;
}
/** Mean period over the crossings (least-squares slope of crossing time against index). */
function meanPeriod(c: number[]): number {
  const n = c.length;
  const mi = (n - 1) / 2;
  const mc = c.reduce((s, x) => s + x, 0) / n;
  let sxy = 0, sxx = 0;
  for (let i = 0; i < n; i++) { sxy += (i - mi) * (c[i] - mc); sxx += (i - mi) ** 2; }
  return sxy / sxx;
}

describe('virtual balance', () => {
  it('free decay matches the analytic damped oscillator (no noise)', () => {
    // θ = θ_eq + A·e^(−t/τ)·cos(ω_d t + φ), τ = 2Q/ω₀, ω_d = ω₀√(1 − 1/4Q²): damped harmonic oscillator
    const sc = base();
    const r = simulateToArrays(sc, 7);
    const w0 = 2 * Math.PI / 10;
    const tau = 2 * 50 / w0;
    const wd = w0 * Math.sqrt(1 - 1 / (4 * 50 * 50));
    let maxErr = 0;
    for (let i = 0; i < r.t.length; i++) {
      const expect_ = 0.002 + 0.01 * Math.exp(-r.t[i] / tau) * Math.cos(wd * r.t[i] + 0.7);
      maxErr = Math.max(maxErr, Math.abs(r.theta[i] - expect_));
    }
    expect(r.t.length).toBe(6000);
    expect(maxErr).toBeLessThan(1e-13);
  });

  it('the step covariance keeps the thermal state stationary: Φ·P∞·Φᵀ + Q = P∞', () => {
    const I = 3.6e-5, kappa = 2.7e-9, kT = K_BOLTZMANN * 295;
    for (const [q, h] of [[5, 0.1], [2000, 0.5], [0.8, 1]]) {
      const p = propagator(I, kappa, q, h, kT);
      const P = [kT / kappa, kT / I];
      const f = p.phi;
      const c11 = f[0] * f[0] * P[0] + f[1] * f[1] * P[1] + p.cov[0];
      const c12 = f[0] * f[2] * P[0] + f[1] * f[3] * P[1] + p.cov[1];
      const c22 = f[2] * f[2] * P[0] + f[3] * f[3] * P[1] + p.cov[2];
      expect(c11 / P[0]).toBeCloseTo(1, 10);
      expect(c12 / Math.sqrt(P[0] * P[1])).toBeCloseTo(0, 10);
      expect(c22 / P[1]).toBeCloseTo(1, 10);
    }
  });

  it('the step covariance equals a direct quadrature of ∫Φ(s)·GGᵀ·Φ(s)ᵀ ds, also at high rate and high Q', () => {
    const I = 3.6e-5, kappa = kappaFromPeriod(I, 60), kT = K_BOLTZMANN * 295;
    for (const [q, h] of [[1e4, 1e-3], [1e4, 1e-4], [1e4, 0.2], [3, 0.05], [3, 1e-3]]) {
      const p = propagator(I, kappa, q, h, kT);
      const w0 = Math.sqrt(kappa / I), g = w0 / (2 * q), wd = Math.sqrt(w0 * w0 - g * g);
      const qc = 4 * g * kT / I;
      // Simpson's rule on the impulse response (row 2 of Φ(s) applied to a unit velocity)
      const n = 2000;
      let s11 = 0, s12 = 0, s22 = 0;
      for (let i = 0; i <= n; i++) {
        const s = (i / n) * h;
        const wgt = i === 0 || i === n ? 1 : i % 2 ? 4 : 2;
        const e = Math.exp(-g * s);
        const a = e * Math.sin(wd * s) / wd;
        const b = e * (Math.cos(wd * s) - (g / wd) * Math.sin(wd * s));
        s11 += wgt * a * a; s12 += wgt * a * b; s22 += wgt * b * b;
      }
      const k = qc * h / (3 * n);
      expect(p.cov[0] / (k * s11)).toBeCloseTo(1, 6);
      expect(p.cov[1] / (k * s12)).toBeCloseTo(1, 6);
      expect(p.cov[2] / (k * s22)).toBeCloseTo(1, 6);
    }
  });

  it('thermal noise gives θ_rms → √(k_B T/κ)', () => {
    // equipartition, checked against src/physics/thermal.ts
    const I = 1e-4, T0 = 1;
    const sc = base({ duration_s: 20000, sample_rate_Hz: 20, inertia_kg_m2: I, kappa_Nm_per_rad: kappaFromPeriod(I, T0), q: 5, thermal_noise: true, temperature_K: 300, initial: {} });
    const r = simulateToArrays(sc, 42);
    let s = 0, s2 = 0;
    for (let i = 0; i < r.theta.length; i++) { s += r.theta[i]; s2 += r.theta[i] ** 2; }
    const n = r.theta.length;
    const rms = Math.sqrt(s2 / n - (s / n) ** 2);
    expect(rms / thermalAngleRms(300, sc.kappa)).toBeGreaterThan(0.96);
    expect(rms / thermalAngleRms(300, sc.kappa)).toBeLessThan(1.04);
  });

  it('a temperature swing moves the period by its coefficient', () => {
    // ΔT held at +2 K over the run (a swing of 2 K amplitude at its crest, period ≫ run)
    const swing = { amplitude_K: 2, period_s: 1e9, phase_rad: Math.PI / 2, period_coefficient_per_K: 5e-5 };
    const cold = simulateToArrays(base({ q: 1e4 }), 1);
    const warm = simulateToArrays(base({ q: 1e4, temperature_swing: swing }), 1);
    const y = (r: typeof cold) => r.theta.map((v, i) => v - r.thetaEq[i]);
    const Tc = meanPeriod(crossings(cold.t, y(cold)));
    const Tw = meanPeriod(crossings(warm.t, y(warm)));
    expect((Tw / Tc - 1) / 1e-4).toBeCloseTo(1, 3); // +2 K × 50 ppm/K = +100 ppm
    expect(warm.temperature_K[0]).toBeCloseTo(297, 9);
  });

  it('dG/dT from the material table lowers the period when G rises (κ ∝ G)', () => {
    const swing = { amplitude_K: 1, period_s: 1e9, phase_rad: Math.PI / 2, dG_dT_per_K: 1e-4 };
    const a = simulateToArrays(base({ q: 1e4 }), 1);
    const b = simulateToArrays(base({ q: 1e4, temperature_swing: swing }), 1);
    const y = (r: typeof a) => r.theta.map((v, i) => v - r.thetaEq[i]);
    const ratio = meanPeriod(crossings(b.t, y(b))) / meanPeriod(crossings(a.t, y(a)));
    expect((1 - ratio) / (1 - 1 / Math.sqrt(1 + 1e-4))).toBeCloseTo(1, 3);
  });

  it('a period step changes the period by its ppm from its time on', () => {
    const r = simulateToArrays(base({ q: 1e4, duration_s: 1200, period_steps: [{ t_s: 600, ppm: 500 }] }), 1);
    const y = r.theta.map((v, i) => v - r.thetaEq[i]);
    const c = crossings(r.t, y);
    const before = meanPeriod(c.filter((x) => x < 600));
    const after = meanPeriod(c.filter((x) => x > 600));
    expect((after / before - 1) / 500e-6).toBeCloseTo(1, 3);
  });

  it('creep and twists move the equilibrium: θ_eq = θ_∞ + a·ln(1 + t/t_c), steps of 2π per turn', () => {
    const r = simulateToArrays(base({
      creep: { a_rad: 1e-4, tc_s: 100, start_s: 0 },
      disturbances: [{ t_s: 300, twist_turns: 2, creep: { a_rad: -5e-5, tc_s: 50 } }],
    }), 1);
    for (const i of [0, 1000, 2999, 3000, 4500, 5999]) {
      const t = r.t[i];
      let eq = 0.002 + 1e-4 * Math.log1p(t / 100);
      if (t >= 300) eq += 4 * Math.PI - 5e-5 * Math.log1p((t - 300) / 50);
      expect(r.thetaEq[i]).toBeCloseTo(eq, 13);
    }
    // the body is carried round with the clamp: the swing continues across the step
    expect(Math.abs(r.theta[3000] - r.thetaEq[3000])).toBeLessThan(0.01);
  });

  it('a kick adds a swing of the given amplitude', () => {
    const r = simulateToArrays(base({ q: 1e5, initial: {}, disturbances: [{ t_s: 100, kick_rad: 0.003 }] }), 1);
    let peak = 0;
    for (let i = 0; i < r.t.length; i++) if (r.t[i] > 100) peak = Math.max(peak, Math.abs(r.theta[i] - r.thetaEq[i]));
    expect(peak / 0.003).toBeCloseTo(1, 2);
  });

  it('is deterministic for a seed', () => {
    const sc = base({ thermal_noise: true, duration_s: 60 });
    const a = simulateToArrays(sc, 5).theta;
    const b = simulateToArrays(sc, 5).theta;
    const c = simulateToArrays(sc, 6).theta;
    expect(Array.from(a)).toEqual(Array.from(b));
    expect(a[100]).not.toBe(c[100]);
    // and the block size does not change the samples
    const bal = new Balance(sc, new Rng(5));
    bal.next(1); bal.next(17);
    expect(bal.next(5).theta[0]).toBe(simulateToArrays(sc, 5).theta[18]);
  });
});
