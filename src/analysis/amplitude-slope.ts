/**
 * The period's dependence on the swing amplitude (anelasticity): a weighted
 * least-squares fit of the windows' periods P_i = P_c + s·(A_i − Ā) + β·(T_i − T̄)
 * with an intercept per configuration (one when the run has none), the
 * temperature term when the windows carry temp_C and it spans enough to be
 * told from the amplitude, and s in s/rad. An elastic fibre has s = 0 whatever
 * the swing (docs/physics.md, "Amplitude independence"); a non-zero s is the
 * fibre's anelasticity (or a torque that depends on the angle).
 *
 * σ: (XᵀWX)⁻¹ times the overlap o = window/step times a Birge ratio² taken
 * on blocks of consecutive windows (at least 4·o of them, 40 blocks or more):
 * the blocks' mean residuals against what the windows' σ's and their overlap
 * predict for them, over N − p degrees of freedom. The slope rests on how the
 * period moves over hours, and at that time scale overlapping windows' period
 * errors need not add up as the overlap says: where readout noise (a white
 * phase noise) dominates, neighbours' errors anticorrelate and the flat factor
 * o made σ 2.5× the scatter over seeds (pull SD 0.40); on blocks the scatter is
 * measured where it matters, and is used below 1 too once there are 10 degrees
 * of freedom (fewer: the windows' own Birge ratio, at least 1). Checked against
 * the scatter over seeds in test/analysis/amplitude-slope.test.ts and
 * `npm run bench -- compare`.
 */
import { weightedLeastSquares } from './weighted-least-squares.js';

/**
 * The swing amplitude a window's period belongs to. A least-squares sine fit weighs each instant by
 * the swing's power, A² ∝ e^(−2γs): over a window of span W its centroid lies γ·W²/6 before the middle
 * (to first order; derived here), so the fitted period is the period of that instant, where the
 * amplitude was A_mid·e^(γ²W²/6). Without this the slope of a quiet decay came out 7.7·10⁻⁵ high
 * (T 30 s, τ 1.6 h, 4-period windows: on a noise-free run, 30 times its σ).
 */
export function periodAmplitude(w: { amplitude_rad: number | null; decay_rate_per_s: number | null; t_start_s: number; t_end_s: number }): number {
  if (w.amplitude_rad === null) return NaN;
  const gW = (w.decay_rate_per_s ?? 0) * (w.t_end_s - w.t_start_s);
  return w.amplitude_rad * Math.exp((gW * gW) / 6);
}

/** A fitted amplitude slope. */
export interface AmplitudeSlope {
  slope_s_per_rad: number;
  slope_sigma_s_per_rad: number;
  /** dP/dT, s/K, when the temperature term was fitted (else null) */
  temperature_coefficient_s_per_K: number | null;
  temperature_coefficient_sigma_s_per_K: number | null;
  /** the weighted mean temperature the intercepts refer to, °C (null without the temperature term) */
  temp_ref_C: number | null;
  /** the intercept(s) at the mean amplitude and temperature, s (one per configuration index; NaN where none) */
  period_s: Float64Array;
  /** the mean amplitude the intercepts refer to, rad, and the amplitudes' span */
  amplitude_ref_rad: number;
  amplitude_min_rad: number;
  amplitude_max_rad: number;
  windows: number;
  /** windows left out by `clip` */
  clipped: number;
  /** Σ w·(P − fit)², and per degree of freedom */
  chi2: number;
  chi2_red: number;
  /** the factor the σ's were scaled by beyond the overlap: the blocks' Birge ratio (see above) */
  birge: number;
}

/** Options of fitAmplitudeSlope. */
export interface AmplitudeSlopeOptions {
  /** each window's mean temperature, °C (null where unknown: then no temperature term) */
  temp_C?: ArrayLike<number | null> | null;
  /** configuration index of each window, 0 … C−1 (default all 0) */
  config?: ArrayLike<number> | null;
  /** window_periods/step_periods (default 1) */
  overlap?: number;
  /** least temperature span for the temperature term, K (default 0.05) */
  tempMinSpan_K?: number;
  /**
   * leave out windows whose residual exceeds this many robust σ's (1.4826 × the median |residual/σ|, at
   * least 1), refitting until none does — a period step from something else (a shield touching) is not
   * the swing's doing (default: keep every window)
   */
  clip?: number;
}

/**
 * Fit the slope; null with too few windows, no spread of amplitude, or a singular system. The
 * regressor need not be an amplitude (any positive quantity, e.g. a shifted time for a drift to
 * compare with: pipelines/watch/watch-period.ts).
 */
export function fitAmplitudeSlope(amplitude: ArrayLike<number>, period: ArrayLike<number>, sigma: ArrayLike<number>, opts: AmplitudeSlopeOptions = {}): AmplitudeSlope | null {
  let idx: number[] = [];
  for (let i = 0; i < period.length; i++) {
    const A = amplitude[i], P = period[i], s = sigma[i];
    if (Number.isFinite(A) && A > 0 && Number.isFinite(P) && s > 0 && Number.isFinite(s)) idx.push(i);
  }
  const usable = idx.length;
  let f = fitSubset(amplitude, period, sigma, opts, idx);
  for (let round = 0; opts.clip !== undefined && f && round < 5; round++) {
    const z = idx.map((i) => f!.residual(i) / sigma[i]);
    const med = [...z].map(Math.abs).sort((a, b) => a - b)[z.length >> 1];
    const lim = opts.clip * Math.max(1.4826 * med, 1);
    const keep = idx.filter((_, k) => Math.abs(z[k]) <= lim);
    if (keep.length === idx.length) break;
    idx = keep;
    f = fitSubset(amplitude, period, sigma, opts, idx);
  }
  if (!f) return null;
  const { residual: _r, ...out } = f;
  return { ...out, clipped: usable - idx.length };
}

function fitSubset(
  amplitude: ArrayLike<number>, period: ArrayLike<number>, sigma: ArrayLike<number>, opts: AmplitudeSlopeOptions, idx: number[],
): (Omit<AmplitudeSlope, 'clipped'> & { residual: (i: number) => number }) | null {
  const o = Math.max(1, opts.overlap ?? 1);
  const n = idx.length;
  if (n < 4) return null;
  const cfgIn = opts.config;
  const cfgMap = new Map<number, number>();
  for (const i of idx) {
    const c = cfgIn ? cfgIn[i] : 0;
    if (!cfgMap.has(c)) cfgMap.set(c, cfgMap.size);
  }
  const C = cfgMap.size;
  const w = Float64Array.from(idx, (i) => 1 / sigma[i] ** 2);
  let sw = 0, sA = 0, aMin = Infinity, aMax = -Infinity;
  for (let k = 0; k < n; k++) {
    const A = amplitude[idx[k]];
    sw += w[k]; sA += w[k] * A; aMin = Math.min(aMin, A); aMax = Math.max(aMax, A);
  }
  if (!(aMax > aMin)) return null;
  const aRef = sA / sw;
  // the temperature term, only with a temperature for every window and enough span
  const temps = opts.temp_C;
  let useT = !!temps;
  let tRef = 0;
  if (temps) {
    let st = 0, tMin = Infinity, tMax = -Infinity;
    for (let k = 0; k < n; k++) {
      const T = temps[idx[k]];
      if (T === null || !Number.isFinite(T)) { useT = false; break; }
      st += w[k] * T; tMin = Math.min(tMin, T); tMax = Math.max(tMax, T);
    }
    if (useT && !(tMax - tMin >= (opts.tempMinSpan_K ?? 0.05))) useT = false;
    tRef = st / sw;
  }
  const p = C + 1 + (useT ? 1 : 0);
  // centre the periods on their weighted mean: the intercepts absorb it exactly
  let sP = 0;
  for (let k = 0; k < n; k++) sP += w[k] * period[idx[k]];
  const pBar = sP / sw;
  const X = new Float64Array(n * p), y = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    const i = idx[k];
    X[k * p + cfgMap.get(cfgIn ? cfgIn[i] : 0)!] = 1;
    X[k * p + C] = amplitude[i] - aRef;
    if (useT) X[k * p + C + 1] = (temps![i] as number) - tRef;
    y[k] = period[i] - pBar;
  }
  const f = weightedLeastSquares(X, p, y, w);
  if (!f) return null;
  const dof = n - o * p > 0 ? n - o * p : n - p;
  let birge = Math.max(1, Math.sqrt(f.chi2 / Math.max(dof, 1)));
  // the blocks' ratio (see above), in the callers' order of the windows (time)
  const L = Math.max(Math.ceil(4 * o), Math.ceil(n / 40));
  let chi2b = 0, blocks = 0;
  for (let k0 = 0; k0 < n; k0 += L) {
    let W = 0, R = 0;
    const k1 = Math.min(n, k0 + L);
    for (let k = k0; k < k1; k++) {
      let fit = 0;
      for (let j = 0; j < p; j++) fit += X[k * p + j] * f.beta[j];
      W += w[k];
      R += w[k] * (y[k] - fit);
    }
    chi2b += (R / W) ** 2 / (Math.min(o, k1 - k0) / W);
    blocks++;
  }
  if (blocks - p >= 10) birge = Math.sqrt(chi2b / (blocks - p));
  const sd = (j: number) => Math.sqrt(o * f.cov[j * p + j]) * birge;
  let cIn = 0;
  for (const c of cfgMap.keys()) cIn = Math.max(cIn, c + 1);
  const periods = new Float64Array(cIn).fill(NaN);
  for (const [c, j] of cfgMap) periods[c] = pBar + f.beta[j];
  const beta = f.beta;
  return {
    residual: (i: number) => period[i] - pBar - beta[cfgMap.get(cfgIn ? cfgIn[i] : 0) ?? 0] - beta[C] * (amplitude[i] - aRef)
      - (useT ? beta[C + 1] * ((temps![i] as number) - tRef) : 0),
    slope_s_per_rad: f.beta[C],
    slope_sigma_s_per_rad: sd(C),
    temperature_coefficient_s_per_K: useT ? f.beta[C + 1] : null,
    temperature_coefficient_sigma_s_per_K: useT ? sd(C + 1) : null,
    temp_ref_C: useT ? tRef : null,
    period_s: periods,
    amplitude_ref_rad: aRef,
    amplitude_min_rad: aMin,
    amplitude_max_rad: aMax,
    windows: n,
    chi2: f.chi2,
    chi2_red: f.chi2 / Math.max(n - p, 1),
    birge,
  };
}
