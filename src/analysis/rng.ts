/**
 * The project's one seeded random-number generator (simulator, tests,
 * benchmarks): a scenario or a test with a seed gives the same numbers on
 * every run and machine.
 * xoshiro128** (Blackman & Vigna, 2018) on 32-bit integer arithmetic, seeded
 * through SplitMix32; normals by the polar Box–Muller (Marsaglia) method.
 */

/** Seeded uniform and normal deviates; deterministic for a given seed. */
export class Rng {
  private s0: number;
  private s1: number;
  private s2: number;
  private s3: number;
  private spare = 0;
  private hasSpare = false;

  /** @param seed any finite number (its integer part, mod 2^32, is used) */
  constructor(seed: number) {
    let x = (Math.trunc(seed) >>> 0) ^ 0x9e3779b9;
    const next = (): number => {
      // SplitMix32 step: spreads one seed over the four state words
      x = (x + 0x9e3779b9) | 0;
      let z = x;
      z = Math.imul(z ^ (z >>> 16), 0x85ebca6b);
      z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35);
      return (z ^ (z >>> 16)) >>> 0;
    };
    this.s0 = next();
    this.s1 = next();
    this.s2 = next();
    this.s3 = next();
    if ((this.s0 | this.s1 | this.s2 | this.s3) === 0) this.s0 = 1;
  }

  /** Next raw 32-bit unsigned integer. */
  nextU32(): number {
    const result = Math.imul(rotl(Math.imul(this.s1, 5), 7), 9) >>> 0;
    const t = this.s1 << 9;
    this.s2 ^= this.s0;
    this.s3 ^= this.s1;
    this.s1 ^= this.s2;
    this.s0 ^= this.s3;
    this.s2 ^= t;
    this.s3 = rotl(this.s3, 11);
    return result;
  }

  /** Uniform deviate in [0, 1) with 53 random bits. */
  uniform(): number {
    const hi = this.nextU32() >>> 5; // 27 bits
    const lo = this.nextU32() >>> 6; // 26 bits
    return (hi * 67108864 + lo) / 9007199254740992;
  }

  /** Standard normal deviate (mean 0, variance 1). */
  normal(): number {
    if (this.hasSpare) {
      this.hasSpare = false;
      return this.spare;
    }
    let u: number, v: number, s: number;
    do {
      u = 2 * this.uniform() - 1;
      v = 2 * this.uniform() - 1;
      s = u * u + v * v;
    } while (s >= 1 || s === 0);
    const f = Math.sqrt((-2 * Math.log(s)) / s);
    this.spare = v * f;
    this.hasSpare = true;
    return u * f;
  }

  /** Fill `out` with normal deviates of standard deviation `sigma` (default 1); returns `out`. */
  fillNormal(out: Float64Array, sigma = 1): Float64Array {
    for (let i = 0; i < out.length; i++) out[i] = sigma * this.normal();
    return out;
  }
}

function rotl(x: number, k: number): number {
  return ((x << k) | (x >>> (32 - k))) >>> 0;
}
