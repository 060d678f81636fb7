/**
 * Logarithmic creep of the equilibrium after a disturbance at t0:
 *   θ_eq(t) = θ_∞ + a·ln(1 + (t − t0)/t_c),   rate = a/(t_c + t − t0).
 * For a fixed t_c the model is linear in (θ_∞, a), so the weighted least
 * squares is solved in closed form and t_c found by a golden-section search
 * on ln t_c (χ² is smooth and, in practice, unimodal in ln t_c). The 3×3
 * covariance comes from the Jacobian at the optimum, scaled by χ²_red when
 * the scatter exceeds the σ's (the fitted window σ's are often optimistic).
 *
 * A shift of t0 is absorbed by t_c (t_c' = t_c + t0' − t0), so t0 may be any
 * time at or after the true onset, e.g. the first point fitted.
 */

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
  const t0 = opts.t0_s ?? Math.min(...ts);
  const tLast = Math.max(...ts);
  const tFirst = Math.min(...ts);
  const span = tLast - t0;
  if (!(span > 0)) return null;
  const lo = Math.log(opts.tcMin_s ?? 60);
  const hi = Math.log(opts.tcMax_s ?? 100 * span);

  // χ² profile over t_c with (θ_∞, a) solved linearly
  const solve = (tc: number) => {
    let sw = 0, sx = 0, sy = 0, sxx = 0, sxy = 0;
    for (let i = 0; i < n; i++) {
      const x = Math.log1p((ts[i] - t0) / tc);
      const w = ws[i];
      sw += w; sx += w * x; sy += w * ys[i]; sxx += w * x * x; sxy += w * x * ys[i];
    }
    const det = sw * sxx - sx * sx;
    if (!(Math.abs(det) > 0)) return null;
    const a = (sw * sxy - sx * sy) / det;
    const th = (sy - a * sx) / sw;
    let chi2 = 0;
    for (let i = 0; i < n; i++) {
      const r = ys[i] - th - a * Math.log1p((ts[i] - t0) / tc);
      chi2 += ws[i] * r * r;
    }
    return { a, th, chi2 };
  };
  const f = (u: number) => solve(Math.exp(u))?.chi2 ?? Infinity;
  // coarse scan first (guards against a local minimum), then golden section around the best
  const scanN = 40;
  let best = 0;
  let bestV = Infinity;
  for (let k = 0; k <= scanN; k++) {
    const v = f(lo + ((hi - lo) * k) / scanN);
    if (v < bestV) { bestV = v; best = k; }
  }
  let a0 = lo + ((hi - lo) * Math.max(0, best - 1)) / scanN;
  let b0 = lo + ((hi - lo) * Math.min(scanN, best + 1)) / scanN;
  const g = (Math.sqrt(5) - 1) / 2;
  let c = b0 - g * (b0 - a0);
  let d = a0 + g * (b0 - a0);
  let fc = f(c);
  let fd = f(d);
  for (let it = 0; it < 80 && b0 - a0 > 1e-7; it++) {
    if (fc < fd) { b0 = d; d = c; fd = fc; c = b0 - g * (b0 - a0); fc = f(c); }
    else { a0 = c; c = d; fc = fd; d = a0 + g * (b0 - a0); fd = f(d); }
  }
  const u = (a0 + b0) / 2;
  const tc = Math.exp(u);
  const sol = solve(tc);
  if (!sol) return null;
  const atBound = u - lo < 1e-3 * (hi - lo) || hi - u < 1e-3 * (hi - lo);

  // covariance s²·(JᵀWJ)⁻¹ at the optimum, p = [θ_∞, a, t_c]
  const M = [[0, 0, 0], [0, 0, 0], [0, 0, 0]];
  for (let i = 0; i < n; i++) {
    const dt = ts[i] - t0;
    const J = [1, Math.log1p(dt / tc), (-sol.a * dt) / (tc * (tc + dt))];
    for (let r = 0; r < 3; r++) for (let q = 0; q < 3; q++) M[r][q] += ws[i] * J[r] * J[q];
  }
  // Jacobi scaling: θ (mrad), a (µrad) and t_c (ks) differ by many orders of magnitude
  const dg = [Math.sqrt(M[0][0]), Math.sqrt(M[1][1]), Math.sqrt(M[2][2])];
  const Ms = M.map((row, r) => row.map((v, q) => v / (dg[r] * dg[q])));
  const invS = dg.every((x) => x > 0) ? invert3(Ms) : null;
  const inv = invS ? invS.map((row, r) => row.map((v, q) => v / (dg[r] * dg[q]))) : null;
  const dof = n - 3;
  const chi2Red = dof > 0 ? sol.chi2 / dof : NaN;
  // scale by χ²_red only when it exceeds 1: fitted σ's may be optimistic, not pessimistic
  const scale = sigma && Number.isFinite(chi2Red) ? Math.max(1, chi2Red) : Number.isFinite(chi2Red) ? chi2Red : 1;
  const cov = inv ? inv.map((row) => row.map((v) => v * scale)) : [[NaN, NaN, NaN], [NaN, NaN, NaN], [NaN, NaN, NaN]];
  return {
    t0_s: t0,
    theta_inf_rad: sol.th,
    a_rad: sol.a,
    t_c_s: tc,
    cov,
    theta_inf_sigma_rad: Math.sqrt(cov[0][0]),
    a_sigma_rad: Math.sqrt(cov[1][1]),
    t_c_sigma_s: Math.sqrt(cov[2][2]),
    chi2_red: chi2Red,
    n,
    t_first_s: tFirst,
    t_last_s: tLast,
    t_c_at_bound: atBound,
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

/** Inverse of a symmetric 3×3 matrix by cofactors; null when singular. */
function invert3(m: number[][]): number[][] | null {
  const [[a, b, c], [d, e, f], [g, h, i]] = m;
  const A = e * i - f * h, B = -(d * i - f * g), C = d * h - e * g;
  const det = a * A + b * B + c * C;
  if (!(Math.abs(det) > 0) || !Number.isFinite(det)) return null;
  const D = -(b * i - c * h), E = a * i - c * g, F = -(a * h - b * g);
  const G = b * f - c * e, H = -(a * f - c * d), I = a * e - b * d;
  return [[A / det, D / det, G / det], [B / det, E / det, H / det], [C / det, F / det, I / det]];
}
