/**
 * Test reference for the split photodiode: the light a Gaussian beam of 1/e²
 * radius w, centred at x, puts on each half of a detector split at u = 0,
 * integrated numerically (composite Simpson over ±8w; the tails beyond are
 * below 1e-50 of the total). Independent of any erf implementation.
 */

/** ∫ exp(−2(u − x)²/w²) du over [lo, hi] by composite Simpson with m intervals. */
function integrate(x: number, w: number, lo: number, hi: number, m = 20000): number {
  const h = (hi - lo) / m;
  let s = 0;
  for (let k = 0; k <= m; k++) {
    const u = lo + k * h;
    s += Math.exp((-2 * (u - x) ** 2) / (w * w)) * (k === 0 || k === m ? 1 : k % 2 ? 4 : 2);
  }
  return (s * h) / 3;
}

/** The two halves' shares (a: u > 0, b: u < 0) of a beam of 1/e² radius w centred at x. */
export function beamHalves(x: number, w: number): { a: number; b: number } {
  return { a: integrate(x, w, 0, Math.max(x + 8 * w, 0)), b: integrate(x, w, Math.min(x - 8 * w, 0), 0) };
}
