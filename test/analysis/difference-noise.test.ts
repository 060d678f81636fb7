import { describe, expect, it } from 'vitest';
import { DifferenceNoiseStream, noiseFromDifferences } from '../../src/analysis/difference-noise.js';
import { normals } from '../helpers/blocks.js';

describe('readout noise from differences, streamed', () => {
  const n = 5000;
  const g = normals(3);
  const y = Float64Array.from({ length: n }, () => 2e-6 * g());
  for (let i = 0; i < n; i++) y[i] += 1e-3 * Math.sin((2 * Math.PI * i) / 400);
  const mask = new Uint8Array(n);
  for (let i = 1200; i < 1210; i++) mask[i] = 1;

  function streamed(cuts: number[]): number[] {
    const s = new DifferenceNoiseStream();
    const out: number[] = [];
    let from = 0;
    for (const to of [...cuts, n]) {
      // kept indices on the whole record's grid of every 7th sample, relative to the block
      const idx = Int32Array.from({ length: n }, (_, i) => i).filter((i) => i >= from && i < to && i % 7 === 0).map((i) => i - from);
      out.push(...s.push(y.subarray(from, to), mask.subarray(from, to), to - from, idx));
      from = to;
    }
    return out;
  }

  it('gives the same values however the stream is cut', () => {
    const whole = streamed([]);
    for (const cuts of [[1], [3, 4, 5, 6, 7, 8], [999, 1203, 1204, 4000], Array.from({ length: 200 }, (_, i) => 25 * i + 3)]) {
      const got = streamed(cuts);
      expect(got.length).toBe(whole.length);
      for (let i = 0; i < got.length; i++) {
        if (Number.isNaN(whole[i])) expect(got[i]).toBeNaN();
        else expect(Math.abs(got[i] - whole[i])).toBeLessThanOrEqual(1e-12 * whole[i]);
      }
    }
  });

  it('averages to the whole-record estimate, and that to the noise put in', () => {
    const v = streamed([]).filter(Number.isFinite);
    const mean = v.reduce((a, b) => a + b, 0) / v.length;
    const ref = noiseFromDifferences(y, mask) ** 2;
    expect(Math.abs(mean / ref - 1)).toBeLessThan(0.01); // equal-size groups, so the same mean to their unevenness
    expect(Math.abs(Math.sqrt(ref) / 2e-6 - 1)).toBeLessThan(0.05);
  });
});
