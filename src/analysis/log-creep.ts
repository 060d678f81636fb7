/**
 * Logarithmic creep of the equilibrium after a disturbance at t0:
 *   θ_eq(t) = θ_∞ + a·ln(1 + (t − t0)/t_c),   rate = a/(t_c + t − t0).
 * For a fixed t_c the model is linear in (θ_∞, a): a scan over ln t_c with
 * that closed-form solve gives the start (χ² may have more than one dip in
 * t_c), then all three are fitted together by Levenberg–Marquardt through
 * the project's wrapper (lm.ts), with the analytic Jacobian. The 3×3
 * covariance comes from the Jacobian at the optimum, scaled by χ²_red when
 * the scatter exceeds the σ's (the fitted window σ's are often optimistic).
 *
 * A shift of t0 is absorbed by t_c (t_c' = t_c + t0' − t0), so t0 may be any
 * time at or after the true onset, e.g. the first point fitted.
 */
import { fitLM } from './lm.js';

/** A fitted log-creep model; times in seconds, angles in radians. */
export interface LogCreepFit {
  t0_s: number;
  theta_inf_rad: number;
  a_rad: number;
  t_c_s: number;
  /** covariance of [θ_∞, a, t_c] (rad², rad², s² and cross terms) */
  cov: number[][];
  theta_inf_sigma_rad: number;
  a_sigma_rad: number;
  t_c_sigma_s: number;
  chi2_red: number;
  n: number;
  /** first and last time fitted */
  t_first_s: number;
  t_last_s: number;
  /** true when t_c ended on a search bound (poorly determined) */
  t_c_at_bound: boolean;
}

/** Options of fitLogCreep. */
export interface LogCreepOptions {
  /** disturbance time, s (default: the first t) */
  t0_s?: number;
  /** search range of t_c, s (default 60 s … 100 × the data span) */
  tcMin_s?: number;
  tcMax_s?: number;
}

/** Rate of the fitted creep at time t, rad/s. */
export function creepRate(fit: LogCreepFit, t_s: number): number {
  return fit.a_rad / (fit.t_c_s + t_s - fit.t0_s);
}

/** Fitted equilibrium angle at time t, rad. */
export function creepAngle(fit: LogCreepFit, t_s: number): number {
  return fit.theta_inf_rad + fit.a_rad * Math.log1p((t_s - fit.t0_s) / fit.t_c_s);
}

/**
 * Weighted least-squares fit of the log-creep model to (t, θ ± σ); null when
 * fewer than 5 usable points or a degenerate system. σ ≤ 0 or missing → unit weights.
 */
export function fitLogCreep(t: ArrayLike<number>, theta: ArrayLike<number>, sigma: ArrayLike<number> | null, opts: LogCreepOptions = {}): LogCreepFit | null {
  const ts: number[] = [];
  const ys: number[] = [];
  const ws: number[] = [];
  for (let i = 0; i < t.length; i++) {
    const s = sigma ? sigma[i] : 1;
    if (!Number.isFinite(t[i]) || !Number.isFinite(theta[i])) continue;
    ts.push(t[i]);
    ys.push(theta[i]);
    ws.push(Number.isFinite(s) && s > 0 ? 1 / (s * s) : 1);
  }
  const n = ts.length;
  if (n < 5) return null;
  let tFirst = Infinity, tLast = -Infinity;
  for (const v of ts) { tFirst = Math.min(tFirst, v); tLast = Math.max(tLast, v); }
  const t0 = opts.t0_s ?? tFirst;
  const span = tLast - t0;
  if (!(span > 0)) return null;
  const tcMin = opts.tcMin_s ?? 60, tcMax = opts.tcMax_s ?? 100 * span;

  // start: for a fixed t_c the model is linear in (θ_∞, a); scan ln t_c for the best such fit
  const linear = (tc: number) => {
    let sw = 0, sx = 0, sy = 0, sxx = 0, sxy = 0;
    for (let i = 0; i < n; i++) {
      const x = Math.log1p((ts[i] - t0) / tc), w = ws[i];
      sw += w; sx += w * x; sy += w * ys[i]; sxx += w * x * x; sxy += w * x * ys[i];
    }
    const det = sw * sxx - sx * sx;
    if (!(Math.abs(det) > 0)) return null;
    const a = (sw * sxy - sx * sy) / det;
    const th = (sy - a * sx) / sw;
    let chi2 = 0;
    for (let i = 0; i < n; i++) chi2 += ws[i] * (ys[i] - th - a * Math.log1p((ts[i] - t0) / tc)) ** 2;
    return { th, a, tc, chi2 };
  };
  let start: { th: number; a: number; tc: number; chi2: number } | null = null;
  for (let k = 0; k <= 40; k++) {
    const r = linear(Math.exp(Math.log(tcMin) + (Math.log(tcMax / tcMin) * k) / 40));
    if (r && (!start || r.chi2 < start.chi2)) start = r;
  }
  if (!start) return null;

  // the nonlinear fit of all three through the project's Levenberg–Marquardt wrapper (lm.ts)
  const dts = ts.map((v) => v - t0);
  const r = fitLM({
    x: dts, y: ys, weights: ws,
    model: ([th, a, tc]) => (dt) => th + a * Math.log1p(dt / tc),
    jacobian: ([, a, tc]) => (dt) => [1, Math.log1p(dt / tc), (-a * dt) / (tc * (tc + dt))],
    p0: [start.th, start.a, start.tc],
    scale: [Math.max(Math.abs(start.th), Math.abs(start.a), 1e-12), Math.max(Math.abs(start.a), 1e-12), start.tc],
    min: [-Infinity, -Infinity, tcMin], max: [Infinity, Infinity, tcMax],
  });
  const [th, a, tc] = r.params;
  if (![th, a, tc].every(Number.isFinite)) return null;
  const dof = n - 3;
  const chi2Red = r.ssr / dof;
  // the wrapper scales the covariance by χ²_red; with given σ's keep that only when it exceeds 1
  // (fitted window σ's may be optimistic, not pessimistic)
  const scale = sigma && chi2Red > 0 ? Math.max(1, chi2Red) / chi2Red : 1;
  const cov = r.covariance.map((row) => row.map((v) => v * scale));
  const sd = (k: number) => Math.sqrt(Math.max(cov[k][k], 0));
  // t_c within 0.1 % (in ln t_c) of a search bound: poorly determined
  const near = 1e-3 * Math.log(tcMax / tcMin);
  return {
    t0_s: t0,
    theta_inf_rad: th,
    a_rad: a,
    t_c_s: tc,
    cov,
    theta_inf_sigma_rad: sd(0),
    a_sigma_rad: sd(1),
    t_c_sigma_s: sd(2),
    chi2_red: chi2Red,
    n,
    t_first_s: tFirst,
    t_last_s: tLast,
    t_c_at_bound: Math.log(tc / tcMin) < near || Math.log(tcMax / tc) < near,
  };
}

/** When the creep will have settled below a rate threshold. */
export interface SettleForecast {
  /** time at which |rate| falls below the threshold, s (same base as t) */
  t_s: number;
  /** delta-method standard uncertainty of t_s, s */
  sigma_s: number;
  /** false when the forecast should not be shown: a not significant, t_c on its bound, or extrapolation beyond 20× the data span */
  reliable: boolean;
  /** why it is not reliable, when it is not */
  reason?: string;
}

/**
 * Time when the fitted creep rate |a|/(t_c + t − t0) falls below
 * threshold_rad_per_s: t = t0 + |a|/threshold − t_c (already settled → t0 + 0
 * a time before the last fitted point). Uncertainty by the delta method on (a, t_c).
 */
export function forecastSettle(fit: LogCreepFit, threshold_rad_per_s: number): SettleForecast {
  if (!(threshold_rad_per_s > 0)) throw new RangeError(`forecastSettle: threshold_rad_per_s must be > 0, got ${threshold_rad_per_s}`);
  const absA = Math.abs(fit.a_rad);
  const sgn = Math.sign(fit.a_rad) || 1;
  const raw = fit.t0_s + absA / threshold_rad_per_s - fit.t_c_s;
  // raw < the last time fitted means: already below the threshold
  const t = raw;
  // ∂t/∂a = sign(a)/thr, ∂t/∂t_c = −1
  const ga = sgn / threshold_rad_per_s;
  const v = ga * ga * fit.cov[1][1] + fit.cov[2][2] - 2 * ga * fit.cov[1][2];
  const sigma = Math.sqrt(Math.max(0, v));
  const span = fit.t_last_s - fit.t0_s;
  let reason: string | undefined;
  if (!(absA > 3 * fit.a_sigma_rad)) reason = 'creep amplitude not significant (|a| < 3σ)';
  else if (fit.t_c_at_bound) reason = 't_c on its search bound';
  else if (!Number.isFinite(sigma)) reason = 'covariance not finite';
  else if (t - fit.t_last_s > 20 * span) reason = 'forecast beyond 20× the fitted span';
  return { t_s: t, sigma_s: sigma, reliable: reason === undefined, reason };
}
