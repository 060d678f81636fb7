/**
 * The error function, its complement and its inverse in float64, written for
 * the split-photodiode conversion (s = erf(√2·x/w) ⇒ x = (w/√2)·erf⁻¹(s)).
 *
 * Method (standard numerical analysis, e.g. Abramowitz & Stegun 7.1.6 and
 * 7.1.14; W. H. Press et al., Numerical Recipes, §6.2 and §5.2 for Lentz's
 * method):
 * - erf(x) for |x| < 2 from the series with positive terms (A&S 7.1.6)
 *   erf(x) = (2x/√π)·e^(−x²)·Σ (2x²)ⁿ / (1·3·…·(2n+1)), free of cancellation;
 * - erfc(x) for x ≥ 2 from the Laplace continued fraction (A&S 7.1.14)
 *   erfc(x) = (e^(−x²)/√π) · 1/(x + ½/(x + 1/(x + (3/2)/(x + 2/(x + …))))),
 *   evaluated by the modified Lentz method; for 0.5 ≤ x < 2 as
 *   erfc(2) + (2/√π)∫ₓ² e^(−t²) dt by 16-point Gauss–Legendre quadrature
 *   (nodes computed at load by Newton's method on Pₙ, Numerical Recipes §4.5),
 *   a sum of positive terms, so erfc keeps its relative accuracy in the tail;
 * - erfinv from Winitzki's closed-form approximation (relative error ≈ 2e-3,
 *   S. Winitzki, "A handy approximation for the error function and its
 *   inverse", 2008) refined by Halley steps on the functions above, on erfc
 *   when |x| > 0.5 so the residual (1−|x|) − erfc(y) is formed without
 *   cancellation.
 */

const TWO_OVER_SQRT_PI = 1.1283791670955126; // 2/√π
const ONE_OVER_SQRT_PI = 0.5641895835477563; // 1/√π

/**
 * e^(−x²) without the rounding error of x²: x is split into a 26-bit head and
 * a tail so the head's square is exact (Dekker's splitting, as in fdlibm's erf).
 */
function expMinusSquare(x: number): number {
  const c = 134217729 * x; // 2^27 + 1
  const hi = c - (c - x);
  const lo = x - hi;
  return Math.exp(-hi * hi) * Math.exp(-(lo * (x + hi)));
}

/** erf(x) for |x| < 2 by the positive-term series. */
function erfSeries(x: number): number {
  const x2 = x * x;
  const q = 2 * x2;
  let term = 1;
  let sum = 1;
  for (let n = 0; n < 200; n++) {
    term *= q / (2 * n + 3);
    sum += term;
    if (term < sum * 1e-17) break;
  }
  return TWO_OVER_SQRT_PI * x * expMinusSquare(x) * sum;
}

/** erfc(x) for x ≥ 2 by the continued fraction (modified Lentz). */
function erfcFraction(x: number): number {
  const tiny = 1e-300;
  // f = b0 + a1/(b1 + a2/(b2 + …)) with b_k = x, a_k = k/2
  let f = x;
  let c = x;
  let d = 0;
  for (let k = 1; k < 5000; k++) {
    const a = k * 0.5;
    d = x + a * d;
    if (d === 0) d = tiny;
    c = x + a / c;
    if (c === 0) c = tiny;
    d = 1 / d;
    const delta = c * d;
    f *= delta;
    if (Math.abs(delta - 1) < 1e-16) break;
  }
  return (expMinusSquare(x) * ONE_OVER_SQRT_PI) / f;
}

/** Gauss–Legendre nodes and weights on [−1, 1], by Newton's method on the Legendre polynomial. */
function gaussLegendre(n: number): { x: Float64Array; w: Float64Array } {
  const x = new Float64Array(n);
  const w = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let z = Math.cos((Math.PI * (i + 0.75)) / (n + 0.5));
    let dp = 0;
    for (let it = 0; it < 100; it++) {
      let p0 = 1;
      let p1 = z;
      for (let k = 2; k <= n; k++) {
        const p2 = ((2 * k - 1) * z * p1 - (k - 1) * p0) / k;
        p0 = p1;
        p1 = p2;
      }
      dp = (n * (z * p1 - p0)) / (z * z - 1);
      const dz = p1 / dp;
      z -= dz;
      if (Math.abs(dz) < 1e-16) break;
    }
    x[i] = z;
    w[i] = 2 / ((1 - z * z) * dp * dp);
  }
  return { x, w };
}

const GL = gaussLegendre(16);
const ERFC_2 = erfcFraction(2);

/** erfc(x) for 0.5 ≤ x < 2: erfc(2) plus the integral of the density from x to 2. */
function erfcMid(x: number): number {
  const half = (2 - x) / 2;
  const mid = (2 + x) / 2;
  let s = 0;
  for (let i = 0; i < GL.x.length; i++) {
    const t = mid + half * GL.x[i];
    s += GL.w[i] * expMinusSquare(t);
  }
  return ERFC_2 + TWO_OVER_SQRT_PI * half * s;
}

/** The error function erf(x) = (2/√π)∫₀ˣ e^(−t²) dt, float64. */
export function erf(x: number): number {
  if (Number.isNaN(x)) return NaN;
  const ax = Math.abs(x);
  if (ax < 2) return erfSeries(x);
  if (ax > 6) return x > 0 ? 1 : -1; // 1 − erfc(6) rounds to 1
  const r = 1 - erfcFraction(ax);
  return x > 0 ? r : -r;
}

/** The complementary error function erfc(x) = 1 − erf(x), accurate in the tail. */
export function erfc(x: number): number {
  if (Number.isNaN(x)) return NaN;
  if (x < 0.5) return 1 - erf(x);
  if (x > 27.3) return 0; // below the smallest subnormal
  return x < 2 ? erfcMid(x) : erfcFraction(x);
}

/** The inverse error function: erf(erfinv(x)) = x for −1 ≤ x ≤ 1 (±Infinity at ±1, NaN outside). */
export function erfinv(x: number): number {
  if (Number.isNaN(x) || x < -1 || x > 1) return NaN;
  if (x === 1) return Infinity;
  if (x === -1) return -Infinity;
  if (x === 0) return x; // keeps −0
  const ax = Math.abs(x);
  if (ax < 1e-9) {
    // Maclaurin series: erfinv(x) = (√π/2)(x + (π/12)x³ + …); the cubic term is below an ulp here
    return 0.886226925452758 * x;
  }
  // Winitzki's approximation, a = 0.147
  const a = 0.147;
  const ln = ax > 0.5 ? Math.log((1 - ax) * (1 + ax)) : Math.log1p(-ax * ax); // ln(1 − x²) without the rounding of x² near 1
  const p = 2 / (Math.PI * a) + ln / 2;
  let y = Math.sqrt(Math.sqrt(p * p - ln / a) - p);
  const oneMinus = 1 - ax; // exact for ax ≥ 0.5 (Sterbenz); used above 0.8
  for (let i = 0; i < 8; i++) {
    // residual f = erf(y) − ax, derivative f' = (2/√π)e^(−y²), f''/f' = −2y
    const f = ax > 0.8 ? oneMinus - erfc(y) : erfSeries(y) - ax;
    const u = f / (TWO_OVER_SQRT_PI * expMinusSquare(y));
    const step = u / (1 + y * u); // Halley
    y -= step;
    // Halley's error shrinks as e³·(1 + y²)/3 or so: after a step below 1e-7·y what is left is far below an ulp
    if (Math.abs(step) <= 1e-7 * y) break;
  }
  return x < 0 ? -y : y;
}
