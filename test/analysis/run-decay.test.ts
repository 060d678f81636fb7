/**
 * The run's decay rate and Q from the windows' amplitudes (src/analysis/run-decay.ts).
 *
 * Monte Carlo over simulated runs: a damped sine (internal damping, T₀ = 60 s,
 * 40 samples per period) in white readout noise, cut into windows of 4 periods
 * stepping 1, each fitted by the real window analysis, summarised by the real run
 * summary. σ_γ/γ names the relative σ of one window's own decay rate at the
 * run's start, set through the Cramér–Rao bound (test/helpers/crlb.ts). The
 * truth is the simulation's Q = ω₀/(2γ). A second set drives the pendulum with
 * its thermal torque instead (each quadrature an Ornstein–Uhlenbeck process of
 * variance k_B·T/κ relaxing in τ = 1/γ: the narrow-band form of a thermally
 * driven high-Q oscillator, docs/physics.md).
 */
import { describe, expect, it } from 'vitest';
import { qFromDecayRate, runDecayRate } from '../../src/analysis/run-decay.js';
import { summariseWindows } from '../../src/analysis/run-summary.js';
import { analyseWindow } from '../../src/analysis/window-analysis.js';
import { K_BOLTZMANN } from '../../src/physics/constants.js';
import type { WindowResult } from '../../src/domain/window-result.js';
import { fisherBound } from '../helpers/crlb.js';
import { normals, rng } from '../helpers/blocks.js';

const T0 = 60, spp = 40, wp = 4, A0 = 1e-3;
const w0 = (2 * Math.PI) / T0;

interface Sim { Q: number; windows: number; seed: number; noise_rad: number; thermal_rad2?: number }

/** One simulated run through the real window analysis and run summary. */
function simulate(sim: Sim) {
  const z = normals(sim.seed), u = rng(sim.seed + 1);
  const g = w0 / (2 * sim.Q);
  const wd = Math.sqrt(w0 * w0 + g * g); // internal damping: ω_d² = ω₀² + γ²
  const dt = T0 / spp, n = (sim.windows - 1 + wp) * spp + 1;
  const t = new Float64Array(n), y = new Float64Array(n);
  const phi = 2 * Math.PI * u();
  let a = A0 * Math.cos(phi), b = A0 * Math.sin(phi);
  const V = sim.thermal_rad2 ?? 0, e = Math.exp(-g * dt), kick = Math.sqrt(V * (1 - e * e));
  for (let i = 0; i < n; i++) {
    t[i] = i * dt;
    if (V > 0) {
      y[i] = a * Math.cos(wd * t[i]) + b * Math.sin(wd * t[i]);
      a = e * a + kick * z(); b = e * b + kick * z();
    } else y[i] = A0 * Math.exp(-g * t[i]) * Math.cos(wd * t[i] + phi);
    y[i] += sim.noise_rad * z();
  }
  // with thermal driving κ is what sets V = k_B·T/κ: give the windows an inertia so they report κ
  const TK = 295, I = V > 0 ? (K_BOLTZMANN * TK) / V / (w0 * w0) : undefined;
  const derive = { damping: 'internal' as const, inertia_kg_m2: I };
  const ws: WindowResult[] = [];
  for (let k = 0; k < sim.windows; k++) {
    const i0 = k * spp, i1 = i0 + wp * spp;
    ws.push(analyseWindow({ index: k, t: t.subarray(i0, i1), y: y.subarray(i0, i1), t_start_s: t[i0], t_end_s: t[i1 - 1], periodHint_s: T0 }, { derive }).result);
  }
  return { summary: (temperature_K?: number) => summariseWindows(ws, { overlap: wp, context: derive, temperature_K }), Q: w0 / (2 * g) };
}

/** White readout noise that gives one window at the run's start a decay-rate σ of `rel`·γ (Cramér–Rao). */
function noiseFor(Q: number, rel: number): number {
  const g = w0 / (2 * Q), tw = new Float64Array(wp * spp);
  for (let i = 0; i < tw.length; i++) tw[i] = (i * T0) / spp;
  const fb = fisherBound(tw, { equilibrium_rad: 0, drift_rad_per_s: 0, amplitude_rad: A0, phase_rad: 0.3, period_s: (2 * Math.PI) / Math.sqrt(w0 * w0 + g * g), decay_time_s: 1 / g }, 1, tw[tw.length / 2]);
  return (rel * g) / fb.decay_rate_sigma_per_s;
}

/** Bias of Q and SD of the pulls (Q̂ − Q)/σ_Q over `runs` simulated runs. */
function ensemble(runs: number, make: (seed: number) => Sim, temperature_K?: number) {
  const ratio: number[] = [], pull: number[] = [];
  for (let r = 0; r < runs; r++) {
    const s = simulate(make(1000 + 7 * r));
    const sum = s.summary(temperature_K);
    expect(sum.q, `run ${r}`).not.toBeNull();
    ratio.push(sum.q! / s.Q);
    pull.push((sum.q! - s.Q) / sum.q_sigma!);
  }
  const m = (a: number[]) => a.reduce((x, v) => x + v, 0) / a.length;
  const sd = (a: number[]) => Math.sqrt(a.reduce((x, v) => x + (v - m(a)) ** 2, 0) / (a.length - 1));
  return { bias: m(ratio) - 1, spread: sd(ratio), pullSd: sd(pull) };
}

describe('run Q from the amplitude decay: Monte Carlo over simulated runs', () => {
  const cases: [number, number, number][] = [
    // Q, σ_γ/γ of one window, windows per run
    [100, 0.01, 40], [100, 0.5, 40], [1000, 0.1, 40], [1000, 0.5, 40], [1e4, 0.01, 40], [1e4, 0.5, 40],
    // a short run: the run's own σ_Q/Q is about 0.13, where the non-linearity of 1/γ shows
    [1000, 0.5, 8],
  ];
  for (const [Q, rel, windows] of cases) {
    it(`Q = ${Q}, σ_γ/γ = ${rel} per window, ${windows} windows: bias below 2 %, pull SD 0.85–1.2`, () => {
      const noise = noiseFor(Q, rel);
      const r = ensemble(200, (seed) => ({ Q, windows, seed, noise_rad: noise }));
      // 200 runs: the bias is known to spread/√200, the pull SD to about 5 %
      expect(Math.abs(r.bias), JSON.stringify(r)).toBeLessThan(0.02);
      expect(r.pullSd, JSON.stringify(r)).toBeGreaterThan(0.85);
      expect(r.pullSd, JSON.stringify(r)).toBeLessThan(1.2);
    });
  }

  it('driven by thermal torque (amplitude 100 × the thermal rms): the random walk of ln A is counted in σ', () => {
    const sim = (seed: number): Sim => ({ Q: 1000, windows: 40, seed, noise_rad: 1e-7, thermal_rad2: (A0 / 100) ** 2 });
    const r = ensemble(200, sim, 295);
    expect(Math.abs(r.bias), JSON.stringify(r)).toBeLessThan(0.02);
    expect(r.pullSd, JSON.stringify(r)).toBeGreaterThan(0.85);
    expect(r.pullSd, JSON.stringify(r)).toBeLessThan(1.2);
    // without the temperature the residual-based σ is several times too small
    expect(ensemble(50, sim).pullSd).toBeGreaterThan(3);
  });
});

describe('Q = ω₀/(2γ) from an uncertain γ', () => {
  // E[f(γ̂)] for γ̂ ~ N(γ, σ²), by Simpson's rule over ±10σ (γ̂ ≤ 0 has weight < 1e-23 at σ/γ ≤ 0.1, < 1e-4 at 0.25)
  const expectation = (f: (x: number) => number, g: number, s: number): number => {
    const m = 20000, a = g - 10 * s, h = (20 * s) / m;
    let sum = 0;
    for (let i = 0; i <= m; i++) {
      const x = a + i * h, w = i === 0 || i === m ? 1 : i % 2 ? 4 : 2;
      sum += w * f(x) * Math.exp(-0.5 * ((x - g) / s) ** 2);
    }
    return (sum * h) / 3 / (s * Math.sqrt(2 * Math.PI));
  };
  it('the second-order form ω₀·γ̂/(2(γ̂² + σ²)) is unbiased within 2 % up to σ/γ = 0.25; plain 1/γ̂ is not beyond 0.15', () => {
    const g = 1e-4, omega = 0.1, Q = omega / (2 * g);
    for (const rel of [0.05, 0.1, 0.2, 0.25]) {
      const s = rel * g;
      const corrected = expectation((x) => qFromDecayRate(x, s, omega)?.q ?? 0, g, s);
      expect(Math.abs(corrected / Q - 1), `σ/γ = ${rel}`).toBeLessThan(0.02);
      // the expansion: E[1/γ̂] ≈ (1/γ)(1 + σ²/γ²); the corrected form cancels that term
      if (rel <= 0.1) expect(Math.abs(corrected / Q - 1)).toBeLessThan(rel ** 4 * 3);
    }
    // plain inversion, for γ̂ > 0.05γ (its mean does not exist otherwise)
    const plain = expectation((x) => (x > 0.05 * g ? omega / (2 * x) : 0), g, 0.15 * g);
    expect(plain / Q - 1).toBeGreaterThan(0.02);
  });
  it('no resolved decay: null', () => {
    expect(qFromDecayRate(-1e-6, 1e-6, 0.1)).toBeNull();
    expect(qFromDecayRate(0, 1e-6, 0.1)).toBeNull();
  });
});

describe('runDecayRate', () => {
  const g = 2e-5;
  const at = Array.from({ length: 60 }, (_, i) => 100 + 60 * i);
  const sig = at.map(() => 1e-9);
  it('a knock re-exciting the swing starts a new segment; one slope through both', () => {
    const amp = at.map((t, i) => 1e-3 * Math.exp(-g * t) * (i >= 30 ? 1.4 : 1));
    const r = runDecayRate(at, amp, sig)!;
    expect(r.segments).toBe(2);
    expect(r.rate_per_s / g).toBeCloseTo(1, 9);
    // taken as one stretch the line would be badly wrong
    const one = runDecayRate(at, amp, sig, { jumpRelative: 10, jumpSigma: 1e12 })!;
    expect(one.segments).toBe(1);
    expect(Math.abs(one.rate_per_s / g - 1)).toBeGreaterThan(0.5);
  });
  it('exact data: the decay rate back; σ for independent points is the weighted line\'s', () => {
    const amp = at.map((t) => 1e-3 * Math.exp(-g * t));
    const r = runDecayRate(at, amp, sig)!;
    expect(r.rate_per_s / g).toBeCloseTo(1, 9);
    // σ_lnA = σ_A/A; Σw(x − x̄)² of the weighted line
    const w = at.map((_, i) => (amp[i] / sig[i]) ** 2), sw = w.reduce((a, v) => a + v, 0);
    const xm = at.reduce((a, x, i) => a + w[i] * x, 0) / sw;
    const sxx = at.reduce((a, x, i) => a + w[i] * (x - xm) ** 2, 0);
    expect(r.rate_sigma_per_s / Math.sqrt(1 / sxx)).toBeCloseTo(1, 9);
    expect(runDecayRate(at, amp, sig, { overlap: 4 })!.rate_sigma_per_s / Math.sqrt(4 / sxx)).toBeCloseTo(1, 9);
  });
  it('too few points: null', () => {
    expect(runDecayRate([1, 2], [1, 0.9], [0.01, 0.01])).toBeNull();
  });
});
