import { describe, expect, it } from 'vitest';
import { FLAG_AFTER_GAP, FLAG_INVALID, FLAG_SATURATED, FLAG_SPIKE } from '../../src/domain/block.js';
import { biquadResponse } from '../../src/analysis/biquad.js';
import { Decimator, chooseDecimationFactor, medianInterval } from '../../src/analysis/decimate.js';
import { fitDampedSine } from '../../src/analysis/damped-sine.js';
import { Rng } from '../../src/analysis/rng.js';
import { rng } from '../helpers/blocks.js';


/** Least-squares c + a·cos(ωt) + b·sin(ωt) over the samples with ok[i]; returns amplitude and phase (of cos(ωt + φ)). */
function fitTone(t: Float64Array, y: Float64Array, ok: (i: number) => boolean, f: number): { amp: number; phase: number; offset: number } {
  const w = 2 * Math.PI * f;
  // normal equations of a 3-parameter linear model
  const A = [[0, 0, 0], [0, 0, 0], [0, 0, 0]];
  const r = [0, 0, 0];
  for (let i = 0; i < t.length; i++) {
    if (!ok(i)) continue;
    const v = [1, Math.cos(w * t[i]), Math.sin(w * t[i])];
    for (let p = 0; p < 3; p++) {
      r[p] += v[p] * y[i];
      for (let q = 0; q < 3; q++) A[p][q] += v[p] * v[q];
    }
  }
  // Gaussian elimination
  for (let p = 0; p < 3; p++) {
    for (let q = p + 1; q < 3; q++) {
      const m = A[q][p] / A[p][p];
      for (let s = p; s < 3; s++) A[q][s] -= m * A[p][s];
      r[q] -= m * r[p];
    }
  }
  const x = [0, 0, 0];
  for (let p = 2; p >= 0; p--) {
    let s = r[p];
    for (let q = p + 1; q < 3; q++) s -= A[p][q] * x[q];
    x[p] = s / A[p][p];
  }
  // a cos + b sin = amp·cos(ωt + φ) with amp cos φ = a, −amp sin φ = b
  return { offset: x[0], amp: Math.hypot(x[1], x[2]), phase: Math.atan2(-x[2], x[1]) };
}

const times = (n: number, dt: number, t0 = 0): Float64Array => new Float64Array(n).map((_, i) => t0 + i * dt);

describe('Decimator', () => {
  const M = 10;
  const dt = 0.1; // 10 Hz in, 1 Hz out
  const fsOut = 1 / (M * dt);

  it('keeps a swing at 20 samples per output period: amplitude within 1e-4, phase aligned by the delay correction', () => {
    const f0 = fsOut / 20;
    const N = 40000;
    const t = times(N, dt, 3.7);
    const phi = 0.4;
    const y = t.map((v) => 0.02 + 0.5 * Math.cos(2 * Math.PI * f0 * v + phi));
    const d = new Decimator({ factor: M, sampleInterval_s: dt });
    const out = d.process(t, y, new Uint8Array(N));
    expect(out.n).toBe(N / M);
    const fit = fitTone(out.t, out.y, (i) => !(out.flags[i] & FLAG_INVALID), f0);
    // the settling samples are flagged, the rest are clean
    expect(out.flags.filter((f) => f & FLAG_INVALID).length).toBe(Math.ceil(d.support / M));
    expect(Math.abs(fit.amp / 0.5 - 1)).toBeLessThan(1e-4);
    expect(Math.abs(fit.offset - 0.02)).toBeLessThan(1e-9);
    // the residual phase error after the DC group-delay correction is the
    // difference between phase delay at f0 and group delay at DC: predicted from H
    const H = biquadResponse(d.sections, f0, 1 / dt);
    const predicted = H.phase_rad + 2 * Math.PI * f0 * d.groupDelay_s;
    expect(Math.abs(fit.phase - phi - predicted)).toBeLessThan(1e-6);
    expect(Math.abs(predicted)).toBeLessThan(0.015); // about 10 mrad at s = 20
    // correcting by the phase delay at f0 instead aligns the phase exactly
    const d2 = new Decimator({ factor: M, sampleInterval_s: dt, delayAt_Hz: f0 });
    const out2 = d2.process(t, y, new Uint8Array(N));
    const fit2 = fitTone(out2.t, out2.y, (i) => !(out2.flags[i] & FLAG_INVALID), f0);
    expect(Math.abs(fit2.phase - phi)).toBeLessThan(1e-6);
    expect(Math.abs(d.passbandGain(f0) - 1)).toBeLessThan(1e-4);
  });

  it('suppresses a tone above the output Nyquist frequency by the designed attenuation', () => {
    const f = 0.6 * fsOut; // aliases to 0.4·fsOut
    const N = 40000;
    const t = times(N, dt);
    const y = t.map((v) => Math.cos(2 * Math.PI * f * v));
    const d = new Decimator({ factor: M, sampleInterval_s: dt });
    const out = d.process(t, y, new Uint8Array(N));
    const alias = fitTone(out.t, out.y, (i) => i > 50, fsOut - f);
    // designed: analytic pre-warped Butterworth, order 8, fc = 0.2·fsOut (Oppenheim & Schafer §7.1; from memory)
    const r = Math.tan(Math.PI * f * dt) / Math.tan(Math.PI * 0.2 * fsOut * dt);
    const designed = 1 / Math.sqrt(1 + r ** 16);
    expect(designed).toBeLessThan(2e-4); // about −75 dB
    expect(Math.abs(alias.amp / designed - 1)).toBeLessThan(0.02);
  });

  it('gives the same output whatever the block boundaries', () => {
    const r = rng(5);
    const N = 5000;
    const t = times(N, dt);
    const y = t.map((v) => Math.sin(0.3 * v) + 0.1 * (r() - 0.5));
    const flags = new Uint8Array(N);
    flags[1200] = FLAG_SATURATED;
    flags[2500] = FLAG_AFTER_GAP;
    flags[3001] = FLAG_SPIKE;
    const whole = new Decimator({ factor: 7, sampleInterval_s: dt }).process(t, y, flags);
    for (let trial = 0; trial < 5; trial++) {
      const d = new Decimator({ factor: 7, sampleInterval_s: dt });
      const ts: number[] = [], ys: number[] = [], fs: number[] = [];
      let i = 0;
      while (i < N) {
        const n = 1 + Math.floor(r() * 600);
        const o = d.process(t, y, flags, i, Math.min(N, i + n));
        for (let k = 0; k < o.n; k++) {
          ts.push(o.t[k]);
          ys.push(o.y[k]);
          fs.push(o.flags[k]);
          expect(o.index[k] + i).toBeGreaterThanOrEqual(i);
        }
        i += n;
      }
      expect(new Float64Array(ts)).toEqual(whole.t);
      expect(new Float64Array(ys)).toEqual(whole.y);
      expect(new Uint8Array(fs)).toEqual(whole.flags);
    }
  });

  it('flags the kept samples whose filter support held a bad sample, and only those', () => {
    const N = 6000;
    const t = times(N, dt);
    const y = t.map((v) => Math.cos(0.2 * v));
    const flags = new Uint8Array(N);
    for (let i = 3000; i < 3040; i++) flags[i] = FLAG_SATURATED;
    y.fill(7, 3000, 3040); // a saturated detector reads garbage
    const d = new Decimator({ factor: M, sampleInterval_s: dt });
    const out = d.process(t, y, flags);
    const L = d.support;
    for (let k = 0; k < out.n; k++) {
      const i = out.index[k];
      const tainted = i >= 3000 && i < 3040 + L - 1;
      expect((out.flags[k] & FLAG_SATURATED) !== 0).toBe(tainted);
    }
    // outside the flagged support the garbage did not leak: compare with the undisturbed signal
    const clean = new Decimator({ factor: M, sampleInterval_s: dt }).process(t, t.map((v) => Math.cos(0.2 * v)), new Uint8Array(N));
    for (let k = 0; k < out.n; k++) {
      if (out.flags[k] || clean.flags[k]) continue;
      // the hold of the last good value differs from the true signal; its effect beyond L is below 1e-4 of the L1 norm
      expect(Math.abs(out.y[k] - clean.y[k])).toBeLessThan(2e-4);
    }
  });

  it('an isolated spike or lost sample flags only the next kept output, and costs far less than the noise', () => {
    const N = 6000;
    const t = times(N, dt);
    const y = t.map((v) => Math.cos(0.2 * v));
    const flags = new Uint8Array(N);
    flags[2000] = FLAG_SPIKE;
    y[2000] = 50; // the spike's value is never used: the last good value is held
    flags[4000] = FLAG_INVALID;
    y[4000] = NaN;
    const out = new Decimator({ factor: M, sampleInterval_s: dt }).process(t, y, flags);
    const clean = new Decimator({ factor: M, sampleInterval_s: dt }).process(t, t.map((v) => Math.cos(0.2 * v)), new Uint8Array(N));
    let spiked = 0, invalid = 0;
    for (let k = 0; k < out.n; k++) {
      if (out.flags[k] & FLAG_SPIKE) spiked++;
      if ((out.flags[k] & FLAG_INVALID) && !(clean.flags[k] & FLAG_INVALID)) invalid++;
      if (!out.flags[k] && !clean.flags[k]) expect(Math.abs(out.y[k] - clean.y[k])).toBeLessThan(1e-3);
    }
    expect(spiked).toBe(1);
    expect(invalid).toBe(1);
  });

  it('whiteNoiseSigmaFactor makes the standard errors of fits on decimated white noise honest (Monte Carlo)', () => {
    // a swing in white readout noise, decimated to 40 samples per period, 4-period windows:
    // the fit's own σ, scaled, must match the scatter over independent realisations
    const fs = 20, T = 60, M = 30, N = 20 * 480;
    const rng = new Rng(11);
    const per: number[] = [], sig: number[] = [];
    const dec0 = new Decimator({ factor: M, sampleInterval_s: 1 / fs });
    const k = dec0.whiteNoiseSigmaFactor();
    // ≈ 1/√cutoffFraction for a sharp filter (cutoff 0.4 of the output Nyquist frequency)
    expect(k).toBeGreaterThan(1.5);
    expect(k).toBeLessThan(1.65);
    for (let r = 0; r < 150; r++) {
      const t = new Float64Array(N), y = new Float64Array(N);
      for (let i = 0; i < N; i++) { t[i] = i / fs; y[i] = 1e-3 * Math.cos((2 * Math.PI * t[i]) / T + 0.3) + 1e-5 * rng.normal(); }
      const d = new Decimator({ factor: M, sampleInterval_s: 1 / fs }).process(t, y, new Uint8Array(N));
      const a = d.t.findIndex((x) => x >= 240); // past the filter's settling
      const f = fitDampedSine(d.t.slice(a), d.y.slice(a));
      if (f.status === 'ok') { per.push(f.period_s!); sig.push(f.period_sigma_s! * k); }
    }
    const mean = per.reduce((x, v) => x + v, 0) / per.length;
    const sd = Math.sqrt(per.reduce((x, v) => x + (v - mean) ** 2, 0) / (per.length - 1));
    const reported = sig.reduce((x, v) => x + v, 0) / sig.length;
    expect(per.length).toBeGreaterThan(140);
    // the SD of 150 draws is itself uncertain by ~6 %: allow 20 %
    expect(sd / reported).toBeGreaterThan(0.8);
    expect(sd / reported).toBeLessThan(1.2);
  });

  it('restarts after a gap: output after the gap equals a fresh run on the data after it', () => {
    const N = 4000;
    const t = times(N, dt);
    const y = t.map((v) => Math.sin(0.25 * v) + 0.001 * v);
    const flags = new Uint8Array(N);
    const g = 2345;
    flags[g] = FLAG_AFTER_GAP;
    const out = new Decimator({ factor: M, sampleInterval_s: dt }).process(t, y, flags);
    const fresh = new Decimator({ factor: M, sampleInterval_s: dt }).process(t.subarray(g), y.subarray(g), new Uint8Array(N - g));
    const k0 = out.index.indexOf(g);
    expect(k0).toBeGreaterThan(0);
    expect(out.flags[k0] & FLAG_AFTER_GAP).toBe(FLAG_AFTER_GAP);
    expect(out.y.subarray(k0)).toEqual(fresh.y);
    expect(out.flags[k0] & ~FLAG_AFTER_GAP).toBe(fresh.flags[0]);
  });

  it('factor 1 hands samples through unfiltered', () => {
    const t = times(10, 1);
    const y = t.map((v) => v * v);
    const flags = new Uint8Array(10);
    flags[3] = FLAG_SPIKE;
    const out = new Decimator({ factor: 1, sampleInterval_s: 1 }).process(t, y, flags);
    expect(out.y).toEqual(y);
    expect(out.t).toEqual(t);
    expect(out.flags).toEqual(flags);
  });

  it('helpers: median interval and the decimation factor', () => {
    expect(medianInterval(new Float64Array([0, 1, 2, 2, 3, 100]))).toBe(1);
    expect(medianInterval(new Float64Array([5]))).toBeUndefined();
    // 60 s period at 100 Hz is 6000 samples; 20 per period → keep every 300th
    expect(chooseDecimationFactor(60, 0.01, 20)).toBe(300);
    expect(chooseDecimationFactor(1, 0.1, 20)).toBe(1);
    expect(() => new Decimator({ factor: 0, sampleInterval_s: 1 })).toThrow(/factor/);
  });
});
