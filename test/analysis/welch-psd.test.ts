/**
 * Welch's PSD kernel: Parseval (the one-sided spectrum integrates to the
 * windowed mean square), a white-noise level 2σ²/f_s, a sine's power A²/2,
 * an AR(1) process's known spectrum, and segments that never straddle a gap.
 */
import { describe, expect, it } from 'vitest';
import { WelchPsd } from '../../src/analysis/welch-psd.js';
import { bandMeans, logBands } from '../../src/analysis/log-bands.js';
import { normals } from '../helpers/blocks.js';

const noise = (n: number, seed: number, sigma = 1) => {
  const g = normals(seed);
  return Float64Array.from({ length: n }, () => sigma * g());
};

describe('Welch PSD', () => {
  it('Parseval: Σ S_k·Δf equals the windowed mean square Σ(w·x)²/Σw² of the one segment', () => {
    const n = 1024, dt = 0.05;
    const x = noise(n, 1, 3);
    const w = new WelchPsd({ segment: n, dt_s: dt, detrend: 'none' });
    w.push(x);
    const r = w.result()!;
    let area = 0;
    for (let k = 0; k < r.psd.length; k++) area += r.psd[k] * r.df_Hz;
    let num = 0, den = 0;
    for (let i = 0; i < n; i++) {
      const h = 0.5 * (1 - Math.cos((2 * Math.PI * i) / n)); // periodic Hann
      num += (h * x[i]) ** 2;
      den += h * h;
    }
    expect(area / (num / den)).toBeCloseTo(1, 12);
    expect(r.segments).toBe(1);
    expect(r.df_Hz).toBe(1 / (n * dt));
  });

  it('white noise of variance σ² has the one-sided level 2σ²·Δt', () => {
    const dt = 0.1, sigma = 2e-7;
    const w = new WelchPsd({ segment: 512, dt_s: dt });
    w.push(noise(1 << 18, 2, sigma));
    const r = w.result()!;
    expect(r.segments).toBe(2 * (1 << 18) / 512 - 1);
    let s = 0;
    for (let k = 2; k < r.psd.length - 1; k++) s += r.psd[k];
    const mean = s / (r.psd.length - 3);
    // 1023 segments × 253 bins: the mean level is known to well under 1 %
    expect(mean / (2 * sigma * sigma * dt)).toBeGreaterThan(0.99);
    expect(mean / (2 * sigma * sigma * dt)).toBeLessThan(1.01);
  });

  it('a sine of amplitude A carries A²/2 in its peak, whatever its phase or where it falls between bins', () => {
    const n = 4096, dt = 0.01, A = 0.3;
    for (const [f, ph] of [[12.5, 0.3], [7.3171, 1.9]]) {
      const x = Float64Array.from({ length: 3 * n }, (_, i) => A * Math.cos(2 * Math.PI * f * i * dt + ph));
      const w = new WelchPsd({ segment: n, dt_s: dt });
      w.push(x);
      const r = w.result()!;
      const k0 = Math.round(f / r.df_Hz);
      let p = 0;
      for (let k = k0 - 6; k <= k0 + 6; k++) p += r.psd[k] * r.df_Hz;
      expect(p / (A * A / 2)).toBeCloseTo(1, 3);
    }
  });

  it('an AR(1) sequence has 2Δt·σ²(1 − a²)/(1 − 2a·cos ωΔt + a²) (textbook)', () => {
    const a = 0.9, dt = 1, n = 1 << 20;
    const e = noise(n, 3);
    const x = new Float64Array(n);
    const drive = Math.sqrt(1 - a * a);
    for (let i = 1; i < n; i++) x[i] = a * x[i - 1] + drive * e[i];
    const w = new WelchPsd({ segment: 4096, dt_s: dt });
    w.push(x);
    const r = w.result()!;
    const bands = logBands(r.psd.length, r.df_Hz, { perDecade: 4, firstBin: 4 });
    const got = bandMeans(r.psd, bands);
    const model = bandMeans(Float64Array.from(r.frequency_Hz, (f) => (2 * dt * (1 - a * a)) / (1 - 2 * a * Math.cos(2 * Math.PI * f * dt) + a * a)), bands);
    for (let b = 0; b < got.length; b++) expect(Math.abs(got[b] / model[b] - 1), `band at ${bands.frequency_Hz[b]} Hz`).toBeLessThan(0.06);
  });

  it('linear detrending keeps a ramp from leaking into the spectrum', () => {
    const n = 2048, dt = 1;
    const x = noise(4 * n, 4, 1e-3);
    for (let i = 0; i < x.length; i++) x[i] += 1e-3 * i; // a drift 1000× the noise over a segment
    const plain = new WelchPsd({ segment: n, dt_s: dt });
    plain.push(noise(4 * n, 4, 1e-3));
    const ramp = new WelchPsd({ segment: n, dt_s: dt });
    ramp.push(x);
    const a = plain.result()!, b = ramp.result()!;
    for (let k = 3; k < a.psd.length; k += 97) expect(b.psd[k] / a.psd[k]).toBeCloseTo(1, 6);
  });

  it('a gap ends the stretch: no segment straddles it, and the pieces give what each would alone', () => {
    const n = 256;
    const x = noise(5 * n, 5);
    const split = new WelchPsd({ segment: n, dt_s: 1 });
    split.push(x, 0, 600); // 600 samples: full segments start at 0, 128 and 256 (384 + 256 > 600)
    split.breakStretch();
    split.push(x, 600, 1280);
    expect(split.segments).toBe(3 + 4); // 680 samples after the gap: at 0, 128, 256 and 384
    const a = new WelchPsd({ segment: n, dt_s: 1 });
    a.push(x.subarray(0, 600));
    const b = new WelchPsd({ segment: n, dt_s: 1 });
    b.push(x.subarray(600, 1280));
    const ra = a.result()!, rb = b.result()!, rs = split.result()!;
    for (let k = 0; k < rs.psd.length; k += 13) expect(rs.psd[k]).toBeCloseTo((3 * ra.psd[k] + 4 * rb.psd[k]) / 7, 14);
    // pushing in small pieces changes nothing
    const c = new WelchPsd({ segment: n, dt_s: 1 });
    for (let i = 0; i < 600; i += 37) c.push(x, i, Math.min(600, i + 37));
    expect(Array.from(c.result()!.psd)).toEqual(Array.from(ra.psd));
  });

  it('no full segment, no spectrum; bad options are refused', () => {
    const w = new WelchPsd({ segment: 64, dt_s: 1 });
    w.push(new Float64Array(63));
    expect(w.result()).toBeNull();
    expect(() => new WelchPsd({ segment: 100, dt_s: 1 })).toThrow(/power of two/);
    expect(() => new WelchPsd({ segment: 64, dt_s: 0 })).toThrow(/dt_s/);
  });
});

describe('log bands', () => {
  it('cover the bins once, in order, single bins at the low end and wide bands at the top', () => {
    const b = logBands(1025, 0.5, { perDecade: 10, firstBin: 2 });
    expect(b.lo[0]).toBe(2);
    for (let i = 1; i < b.lo.length; i++) expect(b.lo[i]).toBe(b.hi[i - 1]);
    expect(b.hi[b.hi.length - 1]).toBe(1025);
    expect(b.hi[0] - b.lo[0]).toBe(1);
    // about 10 per decade over 2…1024 (2.7 decades), fewer where bins are wider than a band
    expect(b.lo.length).toBeGreaterThan(18);
    expect(b.lo.length).toBeLessThan(30);
    const last = b.lo.length - 1;
    expect(b.frequency_Hz[last]).toBeCloseTo(((b.lo[last] + b.hi[last] - 1) / 2) * 0.5, 12);
    expect(Array.from(bandMeans(Float64Array.from({ length: 1025 }, (_, k) => k), b))).toEqual(Array.from(b.frequency_Hz, (f) => f / 0.5));
  });
});
