import { describe, expect, it } from 'vitest';
import { nextPow2, realSpectrumPower } from '../../src/analysis/fft.js';
import { Rng } from '../../src/analysis/rng.js';

/** naive O(N²) DFT power of x zero-padded to n, bins 0..n/2 (the definition, e^(−i2πkm/n)) */
function naivePower(x: Float64Array, n: number): Float64Array {
  const out = new Float64Array(n / 2 + 1);
  for (let k = 0; k <= n / 2; k++) {
    let re = 0, im = 0;
    for (let m = 0; m < x.length; m++) {
      re += x[m] * Math.cos((2 * Math.PI * k * m) / n);
      im -= x[m] * Math.sin((2 * Math.PI * k * m) / n);
    }
    out[k] = re * re + im * im;
  }
  return out;
}

describe('realSpectrumPower', () => {
  it('matches a naive DFT, with and without zero padding, for several sizes', () => {
    const rng = new Rng(42);
    for (const [len, n] of [[64, 64], [50, 64], [300, 1024], [2, 2], [1000, 4096]] as const) {
      const x = rng.fillNormal(new Float64Array(len));
      const got = realSpectrumPower(x, n);
      const ref = naivePower(x, n);
      expect(got.length).toBe(n / 2 + 1);
      const scale = Math.max(...ref);
      for (let k = 0; k <= n / 2; k++) expect(Math.abs(got[k] - ref[k]) / scale).toBeLessThan(1e-10);
    }
  });

  it('repeated calls reuse the plan and do not leak the previous input', () => {
    const a = Float64Array.from({ length: 128 }, (_, i) => Math.cos((2 * Math.PI * 5 * i) / 128));
    realSpectrumPower(a, 128);
    const b = Float64Array.from({ length: 100 }, (_, i) => Math.cos((2 * Math.PI * 3 * i) / 128));
    const got = realSpectrumPower(b, 128);
    const ref = naivePower(b, 128);
    for (let k = 0; k <= 64; k++) expect(got[k]).toBeCloseTo(ref[k], 8);
  });

  it('a tone of amplitude a in bin k gives (a·n/2)²', () => {
    const n = 256;
    const x = Float64Array.from({ length: n }, (_, i) => 0.7 * Math.cos((2 * Math.PI * 9 * i) / n));
    expect(realSpectrumPower(x, n)[9]).toBeCloseTo((0.7 * n / 2) ** 2, 6);
  });

  it('refuses sizes that are not powers of two or too small', () => {
    expect(() => realSpectrumPower(new Float64Array(4), 6)).toThrow(/power of two/);
    expect(() => realSpectrumPower(new Float64Array(4), 1)).toThrow(/power of two/);
    expect(() => realSpectrumPower(new Float64Array(10), 8)).toThrow(/exceeds/);
  });

  it('nextPow2', () => {
    expect([0, 1, 2, 3, 4, 5, 1000, 1024, 1025].map(nextPow2)).toEqual([2, 2, 2, 4, 4, 8, 1024, 1024, 2048]);
  });
});
