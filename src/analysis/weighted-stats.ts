/**
 * Inverse-variance weighted mean and straight line, the one implementation
 * every run-level estimate uses (run summary, period baseline, temperature
 * coefficient). Points with a non-positive or non-finite σ, or a non-finite
 * value, are left out.
 *
 * Two corrections, both optional:
 * - `overlap`: overlapping windows share samples, so N windows carry only
 *   about N/overlap independent ones; the variance is multiplied by it.
 * - Birge ratio √(χ²/dof): when the points scatter more than their σ's say,
 *   the scatter is trusted instead (σ × max(1, Birge)). Common practice
 *   (R. T. Birge, Phys. Rev. 40 (1932) 207 — from memory).
 */

/** A weighted mean with its standard uncertainty. */
export interface WeightedMean {
  mean: number;
  sigma: number;
  /** Σ((v − mean)/σ)² */
  chi2: number;
  /** points used */
  n: number;
}

/** A weighted straight line y = intercept + slope·(x − xRef), xRef the weighted mean of x. */
export interface WeightedLine {
  slope: number;
  slope_sigma: number;
  /** y at xRef */
  intercept: number;
  intercept_sigma: number;
  xRef: number;
  chi2: number;
  n: number;
}

/** Options of the weighted estimates. */
export interface WeightedOptions {
  /** variance inflation for correlated points (default 1) */
  overlap?: number;
  /** scale σ up by the Birge ratio when it exceeds 1 (default true) */
  birge?: boolean;
  /** σ floor: each σ is at least this (default 0) */
  sigmaFloor?: number;
}

const usable = (v: number, s: number): boolean => Number.isFinite(v) && s > 0 && Number.isFinite(s);

/** Inverse-variance weighted mean; null when no point is usable. */
export function weightedMean(v: ArrayLike<number>, s: ArrayLike<number>, opts: WeightedOptions = {}): WeightedMean | null {
  const floor = opts.sigmaFloor ?? 0;
  let sw = 0, swx = 0, n = 0;
  for (let i = 0; i < v.length; i++) {
    const si = Math.max(s[i], floor);
    if (!usable(v[i], si)) continue;
    const w = 1 / (si * si);
    sw += w;
    swx += w * v[i];
    n++;
  }
  if (n === 0) return null;
  const mean = swx / sw;
  let chi2 = 0;
  for (let i = 0; i < v.length; i++) {
    const si = Math.max(s[i], floor);
    if (usable(v[i], si)) chi2 += ((v[i] - mean) / si) ** 2;
  }
  const birge = opts.birge !== false && n > 1 ? Math.max(1, Math.sqrt(chi2 / (n - 1))) : 1;
  return { mean, sigma: Math.sqrt((opts.overlap ?? 1) / sw) * birge, chi2, n };
}

/** Inverse-variance weighted straight line; null with fewer than 3 usable points or no spread in x. */
export function weightedLine(x: ArrayLike<number>, y: ArrayLike<number>, s: ArrayLike<number>, opts: WeightedOptions = {}): WeightedLine | null {
  const floor = opts.sigmaFloor ?? 0;
  let S = 0, Sx = 0, Sy = 0, n = 0;
  const ok = (i: number): boolean => Number.isFinite(x[i]) && usable(y[i], Math.max(s[i], floor));
  const w = (i: number): number => 1 / Math.max(s[i], floor) ** 2;
  for (let i = 0; i < x.length; i++) {
    if (!ok(i)) continue;
    const wi = w(i);
    S += wi; Sx += wi * x[i]; Sy += wi * y[i];
    n++;
  }
  if (n < 3) return null;
  const xRef = Sx / S, yRef = Sy / S;
  let Sxx = 0, Sxy = 0;
  for (let i = 0; i < x.length; i++) {
    if (!ok(i)) continue;
    const wi = w(i), dx = x[i] - xRef;
    Sxx += wi * dx * dx;
    Sxy += wi * dx * (y[i] - yRef);
  }
  if (!(Sxx > 0)) return null;
  const slope = Sxy / Sxx;
  let chi2 = 0;
  for (let i = 0; i < x.length; i++) if (ok(i)) chi2 += w(i) * (y[i] - yRef - slope * (x[i] - xRef)) ** 2;
  const birge = opts.birge !== false ? Math.max(1, Math.sqrt(chi2 / (n - 2))) : 1;
  const o = opts.overlap ?? 1;
  return {
    slope, slope_sigma: Math.sqrt(o / Sxx) * birge,
    intercept: yRef, intercept_sigma: Math.sqrt(o / S) * birge,
    xRef, chi2, n,
  };
}
