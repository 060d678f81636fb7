import { from } from 'rxjs';
import { describe, expect, it } from 'vitest';
import { blocks } from '../helpers/blocks.js';
import { adaptiveCondition } from '../../pipelines/adaptive-condition.js';

const fs = 10, T = 30;
const make = (seconds: number) => {
  const n = seconds * fs;
  const t = Float64Array.from({ length: n }, (_, i) => i / fs);
  const y = t.map((v) => 1e-3 * Math.cos((2 * Math.PI * v) / T));
  return { t, y, f: new Uint8Array(n) };
};

describe('adaptiveCondition', () => {
  it('with a period guess fixes the factor from the sample interval, even when blocks hold one sample', async () => {
    const { t, y, f } = make(600);
    let factor = 0, sigma = 0, out = 0;
    await new Promise<void>((done) => from(blocks(t, y, f, [1])).pipe(
      adaptiveCondition({ samplesPerPeriod: 40, periodGuess_s: T, onFactor: (m, s) => { factor = m; sigma = s; } }),
    ).subscribe({ next: (b) => (out += b.n), complete: done }));
    expect(factor).toBe(Math.floor((T * fs) / 40)); // 300 samples per period → 7
    expect(sigma).toBeGreaterThan(1.4); // band-limited noise scale of the decimated fit (see decimate.ts)
    expect(out).toBeGreaterThan(t.length / factor - 5);
  });
  it('without a guess finds the period by FFT over the first stretch and then decimates', async () => {
    const { t, y, f } = make(1800);
    let first = 0, factor = 0;
    await new Promise<void>((done) => from(blocks(t, y, f, [4096])).pipe(
      adaptiveCondition({ samplesPerPeriod: 40, firstEstimate_s: 300, onFirstEstimate: (p, m) => { first = p; factor = m; } }),
    ).subscribe({ complete: done }));
    expect(Math.abs(first - T) / T).toBeLessThan(1e-3);
    expect(factor).toBe(7);
  });
});
