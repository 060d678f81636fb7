/**
 * Robust slope of a series (the equilibrium angle of successive windows) over
 * a trailing horizon, with a distribution-free uncertainty.
 *
 * Choice: Theil–Sen (median of pairwise slopes) with Sen's rank confidence
 * interval (P. K. Sen, "Estimates of the regression coefficient based on
 * Kendall's tau", JASA 63 (1968) 1379–1389; the same recipe is set out in
 * R. O. Gilbert, "Statistical Methods for Environmental Pollution
 * Monitoring", 1987, §16.5 — written here from memory). Why: it needs no
 * tuning constant and no noise model, keeps ~29 % breakdown (a fit glitch or
 * a bumped table gives outlier windows that barely move it), and its interval
 * comes from the data's own scatter rather than from the windows' fitted σ,
 * which overlap-correlated windows tend to understate. Window σ's of one run
 * are nearly equal, so a σ-weighting would gain little.
 *
 * Cost O(n² log n): callers cap n (default 400 points, evenly thinned).
 */

/** Result of a robust trend: slope in units of y per unit of t. */
export interface RobustTrend {
  /** Theil–Sen slope (y units per second when t is in seconds) */
  slope: number;
  /** standard uncertainty from Sen's interval, (upper − lower)/(2·z), times √inflation */
  slope_sigma: number;
  /** Sen's confidence interval at `confidence` (not inflated) */
  lower: number;
  upper: number;
  /** intercept at t_ref: median of y − slope·(t − t_ref) */
  intercept: number;
  t_ref: number;
  /** points used */
  n: number;
  /** t span of the points used, same unit as t */
  span: number;
}

/** Options of robustTrend. */
export interface RobustTrendOptions {
  /** two-sided confidence of Sen's interval (default 0.95) */
  confidence?: number;
  /**
   * variance inflation for correlated points (default 1): overlapping windows
   * (length L stepping S) are roughly L/S times less independent than they look
   */
  inflation?: number;
  /** thin to at most this many points before the O(n²) pass (default 400) */
  maxPoints?: number;
}

/** Standard normal quantile for p in (0, 1) (Acklam's rational approximation, |rel err| < 1.2e-9). */
export function normalQuantile(p: number): number {
  if (!(p > 0 && p < 1)) throw new RangeError(`normalQuantile: p must be in (0, 1), got ${p}`);
  const a = [-3.969683028665376e1, 2.209460984245205e2, -2.759285104469687e2, 1.38357751867269e2, -3.066479806614716e1, 2.506628277459239];
  const b = [-5.447609879822406e1, 1.615858368580409e2, -1.556989798598866e2, 6.680131188771972e1, -1.328068155288572e1];
  const c = [-7.784894002430293e-3, -3.223964580411365e-1, -2.400758277161838, -2.549732539343734, 4.374664141464968, 2.938163982698783];
  const d = [7.784695709041462e-3, 3.224671290700398e-1, 2.445134137142996, 3.754408661907416];
  const lo = 0.02425;
  if (p < lo) {
    const q = Math.sqrt(-2 * Math.log(p));
    return (((((c[0] * q + c[1]) * q + c[2]) * q + c[3]) * q + c[4]) * q + c[5]) / ((((d[0] * q + d[1]) * q + d[2]) * q + d[3]) * q + 1);
  }
  if (p > 1 - lo) return -normalQuantile(1 - p);
  const q = p - 0.5;
  const r = q * q;
  return ((((((a[0] * r + a[1]) * r + a[2]) * r + a[3]) * r + a[4]) * r + a[5]) * q) / (((((b[0] * r + b[1]) * r + b[2]) * r + b[3]) * r + b[4]) * r + 1);
}

/** Theil–Sen slope with Sen's (1968) interval; null when fewer than 3 points or no distinct times. */
export function robustTrend(t: ArrayLike<number>, y: ArrayLike<number>, opts: RobustTrendOptions = {}): RobustTrend | null {
  const confidence = opts.confidence ?? 0.95;
  const inflation = opts.inflation ?? 1;
  const maxPoints = opts.maxPoints ?? 400;
  if (t.length !== y.length) throw new RangeError(`robustTrend: t has ${t.length} points, y has ${y.length}`);
  // keep finite points, thinned evenly to maxPoints
  const idx: number[] = [];
  for (let i = 0; i < t.length; i++) if (Number.isFinite(t[i]) && Number.isFinite(y[i])) idx.push(i);
  let use = idx;
  if (idx.length > maxPoints) {
    use = [];
    const step = (idx.length - 1) / (maxPoints - 1);
    for (let k = 0; k < maxPoints; k++) use.push(idx[Math.round(k * step)]);
  }
  const n = use.length;
  if (n < 3) return null;
  const slopes = new Float64Array((n * (n - 1)) / 2);
  let m = 0;
  let tMin = Infinity;
  let tMax = -Infinity;
  for (let i = 0; i < n; i++) {
    const ti = t[use[i]];
    const yi = y[use[i]];
    if (ti < tMin) tMin = ti;
    if (ti > tMax) tMax = ti;
    for (let j = i + 1; j < n; j++) {
      const dt = t[use[j]] - ti;
      if (dt !== 0) slopes[m++] = (y[use[j]] - yi) / dt;
    }
  }
  if (m === 0) return null;
  const s = slopes.subarray(0, m).sort();
  const slope = medianSorted(s);
  // Sen 1968: C = z·√Var(S), Var(S) = n(n−1)(2n+5)/18 without ties; M1 = (N − C)/2, M2 = (N + C)/2;
  // lower = M1-th, upper = (M2 + 1)-th ordered slope (1-based).
  const z = normalQuantile(0.5 + confidence / 2);
  const C = z * Math.sqrt((n * (n - 1) * (2 * n + 5)) / 18);
  const k1 = Math.max(0, Math.min(m - 1, Math.round((m - C) / 2) - 1));
  const k2 = Math.max(0, Math.min(m - 1, Math.round((m + C) / 2)));
  const lower = s[k1];
  const upper = s[k2];
  const tRef = (tMin + tMax) / 2;
  const resid = new Float64Array(n);
  for (let i = 0; i < n; i++) resid[i] = y[use[i]] - slope * (t[use[i]] - tRef);
  const intercept = medianSorted(resid.sort());
  return {
    slope,
    slope_sigma: ((upper - lower) / (2 * z)) * Math.sqrt(inflation),
    lower,
    upper,
    intercept,
    t_ref: tRef,
    n,
    span: tMax - tMin,
  };
}

/** Median of an ascending array. */
function medianSorted(s: ArrayLike<number>): number {
  const n = s.length;
  const h = n >> 1;
  return n % 2 ? s[h] : 0.5 * (s[h - 1] + s[h]);
}
