import { describe, expect, it } from 'vitest';
import { fitDampedSine, DAMPED_SINE_PARAMS } from '../../src/analysis/damped-sine.js';
import { noiseFromDifferences } from '../../src/analysis/difference-noise.js';
import { FIT_STATUS } from '../../src/analysis/fit-status.js';
import { fitLM } from '../../src/analysis/lm.js';
import { Rng } from '../../src/analysis/rng.js';

interface Sim { eq: number; d: number; A: number; phi: number; T: number; tau: number }
const base: Sim = { eq: 0.0123, d: 2e-8, A: 1.5e-3, phi: 0.9, T: 60, tau: 60 * 800 / Math.PI };

/** synthetic window: scenario of our own, the model of docs/commands.md plus white noise */
function simulate(p: Sim, n: number, periods: number, sigma: number, seed = 1, t0 = 1000) {
  const rng = new Rng(seed);
  const dt = (p.T * periods) / n;
  const t = new Float64Array(n), y = new Float64Array(n);
  const tMid = t0 + 0.5 * (n - 1) * dt;
  for (let i = 0; i < n; i++) {
    t[i] = t0 + i * dt;
    const u = t[i] - tMid;
    y[i] = p.eq + p.d * u + p.A * Math.exp(-u / p.tau) * Math.cos((2 * Math.PI * u) / p.T + p.phi) + sigma * rng.normal();
  }
  return { t, y, tMid };
}

describe('fitDampedSine', () => {
  it('recovers noiseless parameters to ~1e-9 relative', () => {
    const { t, y, tMid } = simulate(base, 960, 4, 0);
    const f = fitDampedSine(t, y);
    expect(f.status).toBe('ok');
    expect(f.t_mid_s).toBeCloseTo(tMid, 9);
    expect(Math.abs(f.period_s! / base.T - 1)).toBeLessThan(1e-9);
    expect(Math.abs(f.decay_time_s! / base.tau - 1)).toBeLessThan(1e-6);
    expect(Math.abs(f.amplitude_rad! / base.A - 1)).toBeLessThan(1e-9);
    expect(Math.abs(f.equilibrium_rad! - base.eq)).toBeLessThan(1e-12);
    expect(Math.abs(f.drift_rad_per_s! - base.d)).toBeLessThan(1e-14);
    expect(Math.abs(f.phase_rad! - base.phi)).toBeLessThan(1e-9);
    expect(f.covariance).toHaveLength(6);
    expect(DAMPED_SINE_PARAMS[4]).toBe('period_s');
  });

  it('fits a strongly damped window (Q = 20) and a 2.5-period window', () => {
    const q20 = { ...base, tau: (20 * 60) / Math.PI };
    const a = simulate(q20, 800, 4, 1e-6, 2);
    const fa = fitDampedSine(a.t, a.y);
    expect(fa.status).toBe('ok');
    expect(Math.abs(fa.decay_time_s! - q20.tau)).toBeLessThan(4 * fa.decay_time_sigma_s!);
    const b = simulate(base, 250, 2.5, 1e-6, 3);
    const fb = fitDampedSine(b.t, b.y);
    expect(fb.status).toBe('ok');
    expect(Math.abs(fb.period_s! - base.T)).toBeLessThan(4 * fb.period_sigma_s!);
  });

  it('no visible decay: rate ≈ 0 is fine, τ is null when the rate comes out ≤ 0', () => {
    const p = { ...base, tau: Infinity };
    let sawNull = false;
    for (let s = 1; s <= 12; s++) {
      const { t, y } = simulate(p, 400, 4, 2e-5, s);
      const f = fitDampedSine(t, y);
      expect(f.status).toBe('ok');
      expect(Math.abs(f.decay_rate_per_s!)).toBeLessThan(4 * f.decay_rate_sigma_per_s!);
      if (f.decay_rate_per_s! <= 0) { sawNull = true; expect(f.decay_time_s).toBeNull(); expect(f.decay_time_sigma_s).toBeNull(); }
      else expect(f.decay_time_s).toBeCloseTo(1 / f.decay_rate_per_s!, 6);
    }
    expect(sawNull).toBe(true);
  });

  it('agrees with ml-levenberg-marquardt (through fitLM) on the same problem', () => {
    const { t, y, tMid } = simulate(base, 480, 4, 2e-5, 7);
    const f = fitDampedSine(t, y);
    expect(f.status).toBe('ok');
    const model = ([eq, d, A, phi, T, g]: number[]) => (x: number) => {
      const u = x - tMid;
      return eq + d * u + A * Math.exp(-g * u) * Math.cos((2 * Math.PI * u) / T + phi);
    };
    const jacobian = ([, , A, phi, T, g]: number[]) => (x: number) => {
      const u = x - tMid, e = Math.exp(-g * u), psi = (2 * Math.PI * u) / T + phi;
      const c = Math.cos(psi), s = Math.sin(psi);
      return [1, u, e * c, -A * e * s, (A * e * s * 2 * Math.PI * u) / (T * T), -u * A * e * c];
    };
    // start a little off our solution so the library has work to do
    const p0 = [f.equilibrium_rad!, 0, f.amplitude_rad! * 1.05, f.phase_rad! + 0.05, f.period_s! * 1.001, 0];
    const scale = [1e-3, 1e-3 / 60, 1e-3, 1, 60, 1 / 60];
    const r = fitLM({ x: t, y, model, jacobian, p0, scale }, { libraryOnly: true, burst: 20, maxBursts: 30 });
    const mine = [f.equilibrium_rad!, f.drift_rad_per_s!, f.amplitude_rad!, f.phase_rad!, f.period_s!, f.decay_rate_per_s!];
    const sig = f.covariance!.map((row, i) => Math.sqrt(row[i]));
    for (let j = 0; j < 6; j++) {
      expect(Math.abs(r.params[j] - mine[j]) / sig[j], `${DAMPED_SINE_PARAMS[j]}: library ${r.params[j]} vs ours ${mine[j]}`).toBeLessThan(1e-3);
      expect(r.sigmas[j] / sig[j]).toBeCloseTo(1, 3);
    }
  });

  it('masked samples are ignored, zero weight equals a mask, and the answer does not depend on sample order', () => {
    const { t, y } = simulate(base, 600, 4, 1e-5, 11);
    const clean = fitDampedSine(t, y);
    const bad = Float64Array.from(y);
    const mask = new Uint8Array(600);
    for (let i = 100; i < 130; i++) { bad[i] = 0.5; mask[i] = 1; }
    bad[400] = NaN; mask[400] = 1;
    const masked = fitDampedSine(t, bad, { mask });
    expect(masked.status).toBe('ok');
    expect(masked.samples).toBe(569);
    const w = Float64Array.from(mask, (m) => (m ? 0 : 1));
    // finite bad values: weight 0 must drop them (a NaN is refused as input even at weight 0)
    const yz = Float64Array.from(bad, (v) => (Number.isFinite(v) ? v : 0.5));
    const weighted = fitDampedSine(t, yz, { weights: w, tMid: clean.t_mid_s });
    expect(weighted.status).toBe('ok');
    expect(weighted.period_s!).toBeCloseTo(masked.period_s!, 9);
    expect(Math.abs(masked.period_s! - clean.period_s!)).toBeLessThan(2 * clean.period_sigma_s!);
    // reversed order: the recurrences fall back to direct evaluation; same least-squares answer
    const tr = Float64Array.from(t).reverse(), yr = Float64Array.from(y).reverse();
    const rev = fitDampedSine(tr, yr, { tMid: clean.t_mid_s, seed: { period_s: 60.3, amplitude: 1.4e-3, phase_rad: 1, equilibrium: 0.012 } });
    expect(rev.status).toBe('ok');
    expect(Math.abs(rev.period_s! - clean.period_s!) / clean.period_sigma_s!).toBeLessThan(1e-4);
    expect(Math.abs(rev.equilibrium_rad! - clean.equilibrium_rad!) / clean.equilibrium_sigma_rad!).toBeLessThan(1e-4);
  });

  it('a relative weight halves the variance like duplicating the sample', () => {
    const { t, y } = simulate(base, 300, 4, 1e-5, 5);
    const w = Float64Array.from(t, (_, i) => (i % 2 ? 2 : 1));
    const fw = fitDampedSine(t, y, { weights: w });
    const td: number[] = [], yd: number[] = [];
    t.forEach((v, i) => { for (let k = 0; k < w[i]; k++) { td.push(v); yd.push(y[i]); } });
    const fd = fitDampedSine(Float64Array.from(td), Float64Array.from(yd), { tMid: fw.t_mid_s, seed: { period_s: fw.period_s!, amplitude: fw.amplitude_rad!, phase_rad: fw.phase_rad!, equilibrium: fw.equilibrium_rad! } });
    expect(fw.status).toBe('ok');
    expect(fd.period_s!).toBeCloseTo(fw.period_s!, 9);
    expect(fd.ssr!).toBeCloseTo(fw.ssr!, 14);
  });

  it('chi2_red is ~1 for white noise, against the given or the difference noise estimate', () => {
    const { t, y } = simulate(base, 2400, 4, 3e-5, 13);
    const f = fitDampedSine(t, y);
    expect(f.noise_source).toBe('differences');
    expect(f.chi2_red!).toBeGreaterThan(0.9);
    expect(f.chi2_red!).toBeLessThan(1.1);
    // the difference estimate of σ scatters by about 2.6 % at N = 2400 (200 seeds): allow 3 SD
    expect(Math.abs(noiseFromDifferences(y) / 3e-5 - 1)).toBeLessThan(0.08);
    const g = fitDampedSine(t, y, { noiseSigma: 3e-5 });
    expect(g.noise_source).toBe('given');
    expect(g.chi2_red!).toBeGreaterThan(0.9);
    expect(g.chi2_red!).toBeLessThan(1.1);
    // a model misfit (a second tone) shows up as chi2_red ≫ 1
    const y2 = Float64Array.from(y, (v, i) => v + 3e-4 * Math.cos(0.37 * t[i]));
    expect(fitDampedSine(t, y2).chi2_red!).toBeGreaterThan(10);
  });

  it('rejects with a reason and no numbers', () => {
    const { t, y } = simulate(base, 480, 4, 1e-5, 17);
    const check = (f: ReturnType<typeof fitDampedSine>, status: string) => {
      expect(f.status, f.message).toBe(status);
      expect(f.period_s).toBeNull();
      expect(f.equilibrium_rad).toBeNull();
      expect(f.covariance).toBeNull();
      expect(typeof f.message).toBe('string');
    };
    const yn = Float64Array.from(y); yn[10] = NaN;
    check(fitDampedSine(t, yn), FIT_STATUS.nonFiniteInput);
    check(fitDampedSine(t.subarray(0, 10), y.subarray(0, 10)), FIT_STATUS.tooFewSamples);
    check(fitDampedSine(t, y.subarray(1)), FIT_STATUS.badInput);
    check(fitDampedSine(t.subarray(0, 120), y.subarray(0, 120), { seed: { period_s: 60, amplitude: 1e-3, phase_rad: 0, equilibrium: 0 } }), FIT_STATUS.tooFewPeriods);
    const rng = new Rng(3);
    const noise = Float64Array.from(t, () => 1e-5 * rng.normal());
    check(fitDampedSine(t, noise), FIT_STATUS.noOscillation);
    // a faint tone the seed is forced onto: amplitude not significant
    const faint = Float64Array.from(t, (v, i) => noise[i] + 2e-7 * Math.cos((2 * Math.PI * v) / 60));
    check(fitDampedSine(t, faint, { seed: { period_s: 60, amplitude: 2e-7, phase_rad: 0, equilibrium: 0 } }), FIT_STATUS.amplitudeBelowNoise);
    // growing amplitude: τ < 0
    const grow = simulate({ ...base, tau: -2000 }, 480, 4, 1e-6, 19);
    check(fitDampedSine(grow.t, grow.y), FIT_STATUS.decayUnphysical);
    // period band excludes what is there
    check(fitDampedSine(t, y, { seed: { period_s: 60, amplitude: 1.5e-3, phase_rad: 0.9, equilibrium: 0.0123 }, maxPeriod_s: 50 }), FIT_STATUS.periodOutsideWindow);
    // iteration limit of 1 from a poor seed
    check(fitDampedSine(t, y, { maxIterations: 1, seed: { period_s: 57, amplitude: 1e-3, phase_rad: 0, equilibrium: 0.0123 } }), FIT_STATUS.didNotConverge);
  });
});
