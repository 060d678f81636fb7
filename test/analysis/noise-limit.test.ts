/**
 * Monte Carlo: does the damped-sine fit reach the noise limit, and are its
 * reported uncertainties honest? Seeded, a few hundred simulated windows of a
 * damped sine in white Gaussian noise (a scenario of our own: T = 60 s,
 * Q = 1000, 4 periods at 20 samples per period, A/σ = 50).
 *
 * The limit is the Cramér–Rao bound (inverse Fisher matrix at the true
 * parameters, Kay 1993 §3.7). For an unbiased efficient estimator the
 * empirical SD equals the bound; with R = 400 windows the SD itself scatters
 * by 1/√(2R) ≈ 3.5 %, so the 15 % tolerance is > 4 standard errors.
 */
import erf from '@stdlib/math-base-special-erf';
import { describe, expect, it } from 'vitest';
import { fisherBound, rifeBoorstynOmegaVariance, periodSigmaFromOmega } from '../helpers/crlb.js';
import { fitDampedSine } from '../../src/analysis/damped-sine.js';
import { Rng } from '../../src/analysis/rng.js';
import { periodSeed } from '../../src/analysis/period-seed.js';

const T = 60, Q = 1000, periods = 4, perPeriod = 20, A = 1e-3, sigma = 2e-5;
const omega0 = (2 * Math.PI) / T; // near enough for choosing τ; T is the damped period we fit
const tau = (2 * Q) / omega0;
const truth = { equilibrium_rad: 0.004, drift_rad_per_s: 0, amplitude_rad: A, phase_rad: 0.4, period_s: T, decay_time_s: tau };
const n = periods * perPeriod, dt = T / perPeriod, R = 400;

function sd(v: number[]): number {
  const m = v.reduce((a, b) => a + b, 0) / v.length;
  return Math.sqrt(v.reduce((a, b) => a + (b - m) ** 2, 0) / (v.length - 1));
}
const mean = (v: number[]) => v.reduce((a, b) => a + b, 0) / v.length;

describe('gaussianRng', () => {
  it('draws standard normals: Kolmogorov–Smirnov against Φ from @stdlib erf, and mean/variance', () => {
    const N = 20000;
    const v = new Rng(99).fillNormal(new Float64Array(N)).sort();
    let D = 0;
    for (let i = 0; i < N; i++) {
      const F = 0.5 * (1 + erf(v[i] / Math.SQRT2));
      D = Math.max(D, Math.abs(F - i / N), Math.abs(F - (i + 1) / N));
    }
    // 1 % critical value of the KS statistic for large N: 1.63/√N (Smirnov's asymptotic table)
    expect(D).toBeLessThan(1.63 / Math.sqrt(N));
    expect(Math.abs(mean(Array.from(v)))).toBeLessThan(4 / Math.sqrt(N));
    expect(Math.abs(sd(Array.from(v)) - 1)).toBeLessThan(4 / Math.sqrt(2 * N));
    // same seed, same stream; another seed, another stream
    expect(new Rng(5).normal()).toBe(new Rng(5).normal());
    expect(new Rng(5).normal()).not.toBe(new Rng(6).normal());
  });
});

describe('noise limit', () => {
  const t = Float64Array.from({ length: n }, (_, i) => i * dt);
  const tMid = 0.5 * (n - 1) * dt;
  const clean = Float64Array.from(t, (ti) => {
    const u = ti - tMid;
    return truth.equilibrium_rad + truth.amplitude_rad * Math.exp(-u / tau) * Math.cos((2 * Math.PI * u) / T + truth.phase_rad);
  });
  const bound = fisherBound(t, truth, sigma, tMid);

  it('Fisher bound equals the Rife–Boorstyn bound for an undamped tone (real-signal form)', () => {
    // with drift and decay fixed the full model reduces to a tone + offset; compare on a long record
    const m = 2000, h = 0.5;
    const tt = Float64Array.from({ length: m }, (_, i) => i * h);
    const fb = fisherBound(tt, { ...truth, decay_time_s: Infinity }, sigma, 0.5 * (m - 1) * h);
    const rb = periodSigmaFromOmega(T, Math.sqrt(rifeBoorstynOmegaVariance(m, h, A, sigma, 'real')));
    console.log(`undamped tone, N = ${m}: Fisher σ_T / Rife–Boorstyn (real form) σ_T = ${(fb.period_sigma_s / rb).toFixed(4)}`);
    // decay and drift are free in the Fisher matrix but nearly orthogonal to the period at the window centre
    expect(fb.period_sigma_s / rb).toBeGreaterThan(0.98);
    expect(fb.period_sigma_s / rb).toBeLessThan(1.05);
    // the complex-tone form (σ² per quadrature) is √2 smaller: not the bound for a real angle signal
    const rbc = periodSigmaFromOmega(T, Math.sqrt(rifeBoorstynOmegaVariance(m, h, A, sigma, 'complex')));
    expect(rb / rbc).toBeCloseTo(Math.SQRT2, 10);
  });

  it(`fit: empirical scatter at the Cramér–Rao bound, honest sigmas, no bias (R = ${R})`, () => {
    const rng = new Rng(20260101);
    const y = new Float64Array(n);
    const P: number[] = [], E: number[] = [], sP: number[] = [], sE: number[] = [], seedP: number[] = [];
    let rejected = 0;
    for (let r = 0; r < R; r++) {
      for (let i = 0; i < n; i++) y[i] = clean[i] + sigma * rng.normal();
      const f = fitDampedSine(t, y);
      const s = periodSeed(t, y);
      if (s.ok) seedP.push(s.period_s);
      if (f.status !== 'ok') { rejected++; continue; }
      P.push(f.period_s!); E.push(f.equilibrium_rad!);
      sP.push(f.period_sigma_s!); sE.push(f.equilibrium_sigma_rad!);
    }
    expect(rejected).toBe(0);
    const ratioP = sd(P) / bound.period_sigma_s, ratioE = sd(E) / bound.equilibrium_sigma_rad;
    const honestP = mean(sP) / sd(P), honestE = mean(sE) / sd(E);
    const biasP = (mean(P) - T) / sd(P), biasE = (mean(E) - truth.equilibrium_rad) / sd(E);
    const seedRatio = sd(seedP) / bound.period_sigma_s;
    const seedBias = (mean(seedP) - T) / bound.period_sigma_s;
    console.log(`period: SD/CRLB ${ratioP.toFixed(3)}, reported/empirical ${honestP.toFixed(3)}, bias ${biasP.toFixed(3)} σ; ` +
      `equilibrium: SD/CRLB ${ratioE.toFixed(3)}, reported/empirical ${honestE.toFixed(3)}, bias ${biasE.toFixed(3)} σ; ` +
      `FFT seed alone: SD/CRLB ${seedRatio.toFixed(2)}, bias ${seedBias.toFixed(1)} CRLB`);
    expect(Math.abs(ratioP - 1)).toBeLessThan(0.15);
    expect(Math.abs(ratioE - 1)).toBeLessThan(0.15);
    expect(Math.abs(honestP - 1)).toBeLessThan(0.15);
    expect(Math.abs(honestE - 1)).toBeLessThan(0.15);
    expect(Math.abs(biasP)).toBeLessThan(0.3);
    expect(Math.abs(biasE)).toBeLessThan(0.3);
    // the seed is only a start: loose, documents that it is well off the bound
    expect(seedP.length).toBe(R);
    expect(seedRatio).toBeGreaterThan(1);
    expect(Math.hypot(seedRatio, seedBias)).toBeLessThan(10);
  });
});
