import { describe, expect, it } from 'vitest';
import { Rng } from '../../src/analysis/rng.js';
import { nextPow2, realSpectrumPower } from '../../src/analysis/fft.js';
import { periodSeed } from '../../src/analysis/period-seed.js';

function tone(n: number, dt: number, T: number, opts: { A?: number; phi?: number; eq?: number; d?: number; sigma?: number; seed?: number } = {}) {
  const { A = 1e-3, phi = 0.3, eq = 0.02, d = 0, sigma = 0, seed = 1 } = opts;
  const rng = new Rng(seed);
  const t = Float64Array.from({ length: n }, (_, i) => 500 + i * dt);
  const tMid = 0.5 * (t[0] + t[n - 1]);
  const y = Float64Array.from(t, (v) => eq + d * (v - tMid) + A * Math.cos((2 * Math.PI * (v - tMid)) / T + phi) + sigma * rng.normal());
  return { t, y, tMid };
}

describe('periodSeed', () => {
  it('4 periods: period to 1e-3, amplitude, phase and level close', () => {
    const { t, y, tMid } = tone(800, 0.3, 60, { sigma: 1e-6 });
    const s = periodSeed(t, y);
    expect(s.ok).toBe(true);
    expect(s.tMid).toBeCloseTo(tMid, 9);
    expect(Math.abs(s.period_s / 60 - 1)).toBeLessThan(1e-3);
    expect(s.frequency_Hz).toBeCloseTo(1 / s.period_s, 12);
    expect(Math.abs(s.amplitude / 1e-3 - 1)).toBeLessThan(1e-3);
    expect(Math.abs(s.phase_rad - 0.3)).toBeLessThan(1e-2);
    expect(Math.abs(s.equilibrium - 0.02)).toBeLessThan(1e-5);
    expect(s.snr).toBeGreaterThan(1000);
  });

  it('only 2 and 3 periods, with a strong linear drift', () => {
    for (const periods of [2, 2.3, 3]) {
      const { t, y } = tone(Math.round(periods * 30), 2, 60, { d: 2e-5, sigma: 1e-6, seed: 5 });
      const s = periodSeed(t, y);
      expect(s.ok, `${periods} periods`).toBe(true);
      expect(Math.abs(s.period_s / 60 - 1), `${periods} periods: ${s.period_s}`).toBeLessThan(0.02);
      expect(Math.abs(s.amplitude / 1e-3 - 1)).toBeLessThan(0.05);
    }
  });

  it('the fine-bin search equals the peak of a full zero-padded FFT', () => {
    const { t, y } = tone(777, 0.5, 47.3, { sigma: 1e-5, seed: 9 });
    const s = periodSeed(t, y, { pad: 8 });
    // independent: full FFT of the detrended Hann-windowed data, padded by 8, log-parabolic vertex
    const n = y.length, nfft = nextPow2(8 * n);
    // least-squares line removed, as periodSeed does
    const tb = t.reduce((a, b) => a + b, 0) / n, yb = y.reduce((a, b) => a + b, 0) / n;
    let sxy = 0, sxx = 0;
    for (let i = 0; i < n; i++) { sxy += (t[i] - tb) * (y[i] - yb); sxx += (t[i] - tb) ** 2; }
    const x = Float64Array.from(y, (v, i) => (v - yb - (sxy / sxx) * (t[i] - tb)) * 0.5 * (1 - Math.cos((2 * Math.PI * i) / (n - 1))));
    const p = realSpectrumPower(x, nfft);
    let k = 2;
    for (let j = 2; j < nfft / 2; j++) if (p[j] > p[k]) k = j;
    const l0 = Math.log(p[k - 1]), l1 = Math.log(p[k]), l2 = Math.log(p[k + 1]);
    const f = (k + (0.5 * (l0 - l2)) / (l0 - 2 * l1 + l2)) / (nfft * 0.5);
    expect(Math.abs(s.frequency_Hz / f - 1)).toBeLessThan(1e-9);
  });

  it('masked samples (set to the trend) do not spoil the seed', () => {
    const { t, y } = tone(600, 0.4, 60, { sigma: 1e-6 });
    const mask = new Uint8Array(600);
    for (let i = 200; i < 240; i++) { y[i] = 5; mask[i] = 1; }
    y[10] = NaN; mask[10] = 1;
    const s = periodSeed(t, y, { mask });
    expect(s.ok).toBe(true);
    expect(Math.abs(s.period_s / 60 - 1)).toBeLessThan(5e-3);
  });

  it('hint picks the expected line when a stronger one is present elsewhere', () => {
    const a = tone(2000, 0.5, 60, { A: 1e-3 });
    const b = tone(2000, 0.5, 13, { A: 3e-3, eq: 0 });
    const y = Float64Array.from(a.y, (v, i) => v + b.y[i]);
    expect(Math.abs(periodSeed(a.t, y).period_s - 13)).toBeLessThan(0.1);
    expect(Math.abs(periodSeed(a.t, y, { hint_s: 62 }).period_s - 60)).toBeLessThan(0.3);
    expect(Math.abs(periodSeed(a.t, y, { minPeriod_s: 30 }).period_s - 60)).toBeLessThan(0.3);
  });

  it('fails with a reason on noise, short, non-finite or non-uniform input', () => {
    const rng = new Rng(2);
    const t = Float64Array.from({ length: 500 }, (_, i) => i);
    const noise = rng.fillNormal(new Float64Array(500));
    const s = periodSeed(t, noise);
    expect(s.ok).toBe(false);
    expect(s.reason).toBe('no-oscillation');
    expect(Number.isNaN(s.period_s)).toBe(true);
    expect(periodSeed(t.subarray(0, 5), noise.subarray(0, 5)).reason).toBe('too-few-samples');
    const bad = Float64Array.from(noise); bad[3] = Infinity;
    expect(periodSeed(t, bad).reason).toBe('non-finite-input');
    const tj = Float64Array.from(t); tj[100] += 0.9;
    expect(periodSeed(tj, noise).reason).toBe('non-uniform-sampling');
    expect(periodSeed(t, noise.subarray(1)).reason).toBe('bad-input');
  });
});
