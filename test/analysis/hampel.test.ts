import { median, medianAbsoluteDeviation } from 'simple-statistics';
import { describe, expect, it } from 'vitest';
import { HAMPEL_CLEAN, HAMPEL_PENDING, HAMPEL_SPIKE, HampelDetector } from '../../src/analysis/hampel.js';
import { rng } from '../helpers/blocks.js';
import { hampelSpikes } from '../../src/analysis/hampel.js';


/**
 * Reference Hampel (definition: Pearson 2002, "Outliers in process modeling and
 * identification", IEEE Trans. Control Syst. Technol.; from memory): window
 * [i−k, i+k] clipped to the data, usable samples only, median and MAD from
 * simple-statistics, spike when |x − med| > n·1.4826·MAD.
 */
function reference(x: Float64Array, usable: Uint8Array, k: number, n: number): Uint8Array {
  const out = new Uint8Array(x.length);
  for (let i = 0; i < x.length; i++) {
    if (!usable[i] || k === 0) continue;
    const w: number[] = [];
    for (let j = Math.max(0, i - k); j <= Math.min(x.length - 1, i + k); j++) if (usable[j]) w.push(x[j]);
    if (w.length < 3) continue;
    const med = median(w);
    const mad = medianAbsoluteDeviation(w);
    if (Math.abs(x[i] - med) > n * 1.4826 * mad) out[i] = 1;
  }
  return out;
}

describe('HampelDetector', () => {
  it('agrees with a direct median/MAD evaluation on noisy data with spikes and unusable samples', () => {
    const r = rng(11);
    for (const k of [1, 2, 3, 5, 10]) {
      const N = 1500;
      const x = new Float64Array(N);
      const usable = new Uint8Array(N).fill(1);
      for (let i = 0; i < N; i++) {
        x[i] = Math.sin((2 * Math.PI * i) / 200) + 0.01 * (r() - 0.5);
        if (r() < 0.02) x[i] += (r() < 0.5 ? -1 : 1) * (0.2 + r());
        if (r() < 0.03) usable[i] = 0;
      }
      // a stretch of repeated values: ties in median and MAD
      for (let i = 700; i < 720; i++) x[i] = 0.25;
      const got = hampelSpikes(x, usable, { halfWidth: k, threshold: 3 });
      expect(Array.from(got)).toEqual(Array.from(reference(x, usable, k, 3)));
    }
  });

  it('answers each push for the sample k back, and flush decides the rest in order', () => {
    const d = new HampelDetector({ halfWidth: 3, threshold: 3 });
    const x = [0, 0.1, -0.1, 0.05, 9, 0, -0.05, 0.1, 0];
    const codes = x.map((v) => d.push(v, true));
    expect(codes.slice(0, 3)).toEqual([HAMPEL_PENDING, HAMPEL_PENDING, HAMPEL_PENDING]);
    // pushes 3..8 decide samples 0..5; sample 4 is the spike
    expect(codes.slice(3)).toEqual([HAMPEL_CLEAN, HAMPEL_CLEAN, HAMPEL_CLEAN, HAMPEL_CLEAN, HAMPEL_SPIKE, HAMPEL_CLEAN]);
    const tail = new Uint8Array(4);
    expect(d.flush(tail)).toBe(3);
    expect(Array.from(tail.subarray(0, 3))).toEqual([HAMPEL_CLEAN, HAMPEL_CLEAN, HAMPEL_CLEAN]);
    d.reset();
    expect(d.push(1, true)).toBe(HAMPEL_PENDING);
  });

  it('catches a spike train and leaves a clean sine alone', () => {
    const N = 4000;
    const x = new Float64Array(N);
    for (let i = 0; i < N; i++) x[i] = 0.01 * Math.cos((2 * Math.PI * i) / 500); // 500 samples a period: raw acquisition rate
    expect(hampelSpikes(x, null, { halfWidth: 5, threshold: 5 }).reduce((a, b) => a + b, 0)).toBe(0);
    const spiked = x.slice();
    const where: number[] = [];
    for (let i = 37; i < N; i += 97) {
      spiked[i] += 0.005 * (i % 2 ? 1 : -1); // half the swing, far above the local change
      where.push(i);
    }
    const s = hampelSpikes(spiked, null, { halfWidth: 5, threshold: 5 });
    const found = [...s.keys()].filter((i) => s[i]);
    expect(found).toEqual(where);
  });

  it('never marks unusable samples and ignores them in the medians', () => {
    const x = new Float64Array([0, 0.01, -0.01, 50, 50, 50, 0.02, -0.02, 0, 0.01]);
    const usable = new Uint8Array([1, 1, 1, 0, 0, 0, 1, 1, 1, 1]);
    expect(Array.from(hampelSpikes(x, usable, { halfWidth: 2, threshold: 3 }))).toEqual(new Array(10).fill(0));
    // NaN counts as unusable even when flagged usable
    x[4] = NaN;
    usable.fill(1);
    usable[3] = usable[5] = 0;
    expect(hampelSpikes(x, usable, { halfWidth: 2, threshold: 3 })[4]).toBe(0);
  });

  it('rejects bad options naming the station field', () => {
    expect(() => new HampelDetector({ halfWidth: 1.5, threshold: 3 })).toThrow(/hampelHalfWidth/);
    expect(() => new HampelDetector({ halfWidth: 2, threshold: 0 })).toThrow(/hampelThreshold/);
  });
});
