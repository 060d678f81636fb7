/**
 * Seeded pseudo-random numbers for deterministic tests and simulations:
 * xoshiro128** (Blackman & Vigna, 2018; 32-bit state words) seeded through
 * splitmix32, and standard normals by the Marsaglia polar method.
 */

/** A seeded generator of uniforms in [0, 1) and standard normal deviates. */
export interface GaussianRng {
  /** uniform in [0, 1), 32 bits of resolution */
  uniform(): number;
  /** standard normal N(0, 1) */
  normal(): number;
  /** fill `out` with normals of standard deviation `sigma` (default 1); returns `out` */
  fillNormal(out: Float64Array, sigma?: number): Float64Array;
}

/** Make a seeded xoshiro128** generator with a Marsaglia-polar normal stream. */
export function gaussianRng(seed: number): GaussianRng {
  // splitmix32 expands one seed into four non-zero state words
  let z = seed >>> 0;
  const split = (): number => {
    z = (z + 0x9e3779b9) >>> 0;
    let r = z;
    r = Math.imul(r ^ (r >>> 16), 0x85ebca6b) >>> 0;
    r = Math.imul(r ^ (r >>> 13), 0xc2b2ae35) >>> 0;
    return (r ^ (r >>> 16)) >>> 0;
  };
  let s0 = split(), s1 = split(), s2 = split(), s3 = split();
  if ((s0 | s1 | s2 | s3) === 0) s0 = 1;

  const next = (): number => {
    const result = Math.imul(rotl(Math.imul(s1, 5) >>> 0, 7), 9) >>> 0;
    const t = (s1 << 9) >>> 0;
    s2 ^= s0; s3 ^= s1; s1 ^= s2; s0 ^= s3;
    s2 ^= t;
    s3 = rotl(s3, 11);
    s0 >>>= 0; s1 >>>= 0; s2 >>>= 0; s3 >>>= 0;
    return result;
  };
  const uniform = (): number => next() / 4294967296;

  let spare = 0;
  let hasSpare = false;
  const normal = (): number => {
    if (hasSpare) { hasSpare = false; return spare; }
    let u: number, v: number, s: number;
    do {
      u = 2 * uniform() - 1;
      v = 2 * uniform() - 1;
      s = u * u + v * v;
    } while (s >= 1 || s === 0);
    const m = Math.sqrt((-2 * Math.log(s)) / s);
    spare = v * m;
    hasSpare = true;
    return u * m;
  };
  const fillNormal = (out: Float64Array, sigma = 1): Float64Array => {
    for (let i = 0; i < out.length; i++) out[i] = sigma * normal();
    return out;
  };
  return { uniform, normal, fillNormal };
}

function rotl(x: number, k: number): number {
  return ((x << k) | (x >>> (32 - k))) >>> 0;
}
