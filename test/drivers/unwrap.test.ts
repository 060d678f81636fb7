import { describe, expect, it } from 'vitest';
import { Unwrapper } from '../../drivers/unwrap.js';

function lcg(seed: number): () => number {
  let s = seed >>> 0;
  return () => (s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 2 ** 32;
}

describe('Unwrapper', () => {
  it('takes the first reading as is', () => {
    expect(new Unwrapper(2 ** 32).next(123)).toBe(123);
  });

  it('follows a u32 µs clock through many wraps', () => {
    const u = new Unwrapper(2 ** 32);
    const step = 1.5e9; // µs, < 2^31
    for (let k = 0; k < 100; k++) {
      const truth = 4e9 + k * step;
      expect(u.next(truth % 2 ** 32)).toBe(truth);
    }
  });

  it('reconstructs a random walk forward and backward with steps below half the modulus', () => {
    const m = 65536;
    const rnd = lcg(7);
    const u = new Unwrapper(m);
    let truth = 1000;
    expect(u.next(truth)).toBe(truth);
    for (let i = 0; i < 20000; i++) {
      truth += Math.floor((rnd() - 0.5) * 0.99 * m);
      const raw = ((truth % m) + m) % m;
      // the first reading (1000) is taken as is, so the result is the truth itself
      expect(u.next(raw)).toBe(truth);
    }
  });

  it('works with a non-integer modulus in seconds', () => {
    const m = 65.536; // a 16-bit ms clock in seconds
    const u = new Unwrapper(m);
    let prev = -Infinity;
    for (let i = 0; i < 1000; i++) {
      const truth = i * 0.7;
      const raw = truth - Math.floor(truth / m) * m;
      const got = u.next(raw);
      expect(got).toBeCloseTo(truth, 9);
      expect(got).toBeGreaterThan(prev);
      prev = got;
    }
  });

  it('rejects a bad modulus', () => {
    expect(() => new Unwrapper(0)).toThrow(/modulus/);
  });
});

