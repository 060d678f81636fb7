import { describe, expect, it } from 'vitest';
import stdlibErf from '@stdlib/math-base-special-erf';
import stdlibErfinv from '@stdlib/math-base-special-erfinv';
import { erf, erfc, erfinv } from '../../drivers/erfinv.js';

// Reference: @stdlib/math-base-special-erf and -erfinv from npm, independent
// implementations (fdlibm's erf; Boost's rational approximations for erfinv).

function lcg(seed: number): () => number {
  let s = seed >>> 0;
  return () => (s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 2 ** 32;
}

const rel = (a: number, b: number) => (a === b ? 0 : Math.abs(a - b) / Math.abs(b));

describe('erf', () => {
  it('agrees with @stdlib erf to about 1e-15 relative', () => {
    const rnd = lcg(1);
    let worst = 0;
    for (let i = 0; i < 20000; i++) {
      const x = (rnd() - 0.5) * 12 * (i % 3 === 0 ? 1e-3 : 1);
      worst = Math.max(worst, rel(erf(x), stdlibErf(x)));
    }
    expect(worst).toBeLessThan(2e-15);
  });

  it('keeps the tail of erfc accurate where 1 − erf would lose it', () => {
    // erfc(x) = 1 − erf(x) checked where the subtraction is harmless (x < 1) and,
    // for the tail, against the asymptotic series e^(−x²)/(x√π)·(1 − 1/(2x²) + 3/(4x⁴) − 15/(8x⁶) + 105/(16x⁸)) (A&S 7.1.23)
    for (let x = 0; x < 1; x += 0.01) expect(rel(erfc(x), 1 - stdlibErf(x))).toBeLessThan(1e-15);
    for (const x of [10, 15, 20, 26]) {
      const u = 1 / (2 * x * x);
      const series = (Math.exp(-x * x) / (x * Math.sqrt(Math.PI))) * (1 - u + 3 * u * u - 15 * u ** 3 + 105 * u ** 4);
      expect(rel(erfc(x), series)).toBeLessThan(1e-11 + 945 * u ** 5);
    }
    expect(erfc(30)).toBe(0);
  });

  it('has the right special values and symmetry', () => {
    expect(erf(0)).toBe(0);
    expect(Object.is(erf(-0), -0)).toBe(true);
    expect(erf(Infinity)).toBe(1);
    expect(erf(-Infinity)).toBe(-1);
    expect(erf(NaN)).toBeNaN();
    for (const x of [0.1, 0.7, 1.9, 2.1, 4]) expect(erf(-x)).toBe(-erf(x));
  });
});

describe('erfinv', () => {
  it('agrees with @stdlib erfinv on (−1, 1) including values very close to ±1', () => {
    const rnd = lcg(2);
    let worst = 0;
    for (let i = 0; i < 20000; i++) {
      const x = i % 2 ? 2 * rnd() - 1 : (rnd() < 0.5 ? -1 : 1) * (1 - 10 ** (-16 * rnd()));
      if (Math.abs(x) >= 1) continue;
      worst = Math.max(worst, rel(erfinv(x), stdlibErfinv(x)));
    }
    expect(worst).toBeLessThan(2e-15);
  });

  it('inverts erf', () => {
    for (let y = -5.5; y <= 5.5; y += 0.0137) {
      const x = stdlibErf(y);
      if (Math.abs(x) < 1) expect(rel(erf(erfinv(x)), x)).toBeLessThan(2e-15);
    }
  });

  it('handles the ends and tiny arguments', () => {
    expect(erfinv(1)).toBe(Infinity);
    expect(erfinv(-1)).toBe(-Infinity);
    expect(erfinv(1.5)).toBeNaN();
    expect(erfinv(NaN)).toBeNaN();
    expect(Object.is(erfinv(-0), -0)).toBe(true);
    // Maclaurin: erfinv(x) ≈ (√π/2)·x for tiny x
    expect(rel(erfinv(1e-12), (Math.sqrt(Math.PI) / 2) * 1e-12)).toBeLessThan(1e-15);
    expect(rel(erfinv(-3e-300), stdlibErfinv(-3e-300))).toBeLessThan(1e-15);
  });
});
