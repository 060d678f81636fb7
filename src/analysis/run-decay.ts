/**
 * The run's decay rate and Q from the amplitudes of its windows.
 *
 * A free oscillation decays as A(t) = A₀·e^(−γt), so ln A falls on a straight
 * line of slope −γ. Every accepted window carries its amplitude at t_mid with a
 * σ, whatever the sign of its own fitted decay, so a weighted line through ln A
 * uses all of them, and its lever arm is the whole run rather than one window:
 * far more precise than averaging the windows' own decays, and without their
 * bias (docs/analysis.md, "The run's Q").
 *
 * A knock or a re-excitation makes the amplitude rise, which a free decay never
 * does beyond its noise: the line is cut into segments there, and one slope is
 * fitted through all segments, each with its own intercept.
 *
 * Overlapping windows share samples, so their amplitudes are correlated: for white
 * noise the correlation of two windows' amplitudes is the share of samples they have
 * in common. Given the windows' spans, the slope's variance is computed with exactly
 * that correlation (cᵀΣc, c the slope's weights); it is what a flat factor
 * window/step gets wrong for short runs, where the end windows see fewer neighbours.
 * Without spans, the variance is multiplied by `overlap`. Either way it is scaled by
 * the Birge ratio when the points scatter more than their σ's say (weighted-stats.ts).
 *
 * A pendulum driven by its own thermal torque does not decay smoothly: each
 * quadrature of its motion diffuses (stationary variance V = k_B·T/κ, relaxation
 * time τ = 1/γ), so ln A wanders like a random walk with variance rate 2·V·γ/A²
 * (docs/physics.md, "Thermal torque noise makes the phase diffuse"). Given V, that
 * walk's variance of the slope is computed from the slope's weights and added; the
 * larger of it and the Birge inflation is kept, since both stand for the same excess
 * scatter.
 *
 * Q = ω₀/(2γ) is a non-linear function of γ: for γ̂ ~ N(γ, σ²), E[1/γ̂] ≈ (1/γ)(1 + σ²/γ²).
 * qFromDecayRate uses ω₀·γ̂/(2·(γ̂² + σ²)), unbiased to second order in σ/γ and bounded
 * where γ̂ approaches 0.
 */

/** The run's amplitude decay rate γ (1/s) with its standard uncertainty. */
export interface RunDecay {
  rate_per_s: number;
  rate_sigma_per_s: number;
  /** amplitudes used */
  n: number;
  /** stretches of free decay between rises of the amplitude */
  segments: number;
  /** Σ((ln A − line)/σ)² and the Birge ratio (≥ 1) */
  chi2: number;
  birge: number;
  /** the thermal random walk's share of the slope's variance, (1/s)²; 0 when not counted */
  thermal_variance_per_s2: number;
}

/** Options of runDecayRate. */
export interface RunDecayOptions {
  /** window_periods / step_periods (default 1): the variance factor when no spans are given */
  overlap?: number;
  /** each window's first and last sample time, s (same order as t): the correlation of overlapping windows */
  spans?: { start: ArrayLike<number>; end: ArrayLike<number> };
  /** a rise of ln A beyond this many combined σ starts a new segment (default 5) */
  jumpSigma?: number;
  /** …and beyond this relative rise (default 0.01: thermal driving makes small rises) */
  jumpRelative?: number;
  /** k_B·T/κ, rad²: the thermal angle variance whose diffusion makes ln A wander (absent: not counted) */
  thermalVariance_rad2?: number;
}

/**
 * Weighted common slope of ln A against t over segments of free decay; the points
 * come in time order. Null with fewer than two points in one segment or no degree of freedom left.
 */
export function runDecayRate(t: ArrayLike<number>, amplitude: ArrayLike<number>, amplitudeSigma: ArrayLike<number>, opts: RunDecayOptions = {}): RunDecay | null {
  const overlap = Math.max(1, opts.overlap ?? 1);
  const jumpSigma = opts.jumpSigma ?? 5, jumpRel = opts.jumpRelative ?? 0.01;
  const look = Math.ceil(overlap); // a rise spreads over the windows that straddle it
  // pass 1: the usable points and their segments
  const xs: number[] = [], ys: number[] = [], ws: number[] = [], seg: number[] = [], t0: number[] = [], t1: number[] = [];
  let segments = 0;
  for (let i = 0; i < t.length; i++) {
    const A = amplitude[i], sA = amplitudeSigma[i];
    if (!(A > 0) || !(sA > 0) || !Number.isFinite(A) || !Number.isFinite(sA) || !Number.isFinite(t[i])) continue;
    const y = Math.log(A), s = sA / A;
    // lowest of the last few points of this segment: a rise above it beyond the noise is a new start
    let low = -1;
    for (let j = ys.length - 1; j >= 0 && j >= ys.length - look && seg[j] === segments - 1; j--) if (low < 0 || ys[j] < ys[low]) low = j;
    const rise = low >= 0 ? y - ys[low] : 0;
    if (low < 0 || rise > Math.max(jumpSigma * Math.hypot(s, 1 / Math.sqrt(ws[low])), jumpRel)) segments++;
    xs.push(t[i]); ys.push(y); ws.push(1 / (s * s)); seg.push(segments - 1);
    if (opts.spans) { t0.push(opts.spans.start[i]); t1.push(opts.spans.end[i]); }
  }
  const n = xs.length;
  // pass 2: weighted means per segment; pass 3: centred sums (exact, no cancellation at high SNR)
  const S = new Float64Array(segments), mx = new Float64Array(segments), my = new Float64Array(segments);
  for (let i = 0; i < n; i++) { S[seg[i]] += ws[i]; mx[seg[i]] += ws[i] * xs[i]; my[seg[i]] += ws[i] * ys[i]; }
  for (let k = 0; k < segments; k++) { mx[k] /= S[k]; my[k] /= S[k]; }
  let Sxx = 0, Sxy = 0;
  for (let i = 0; i < n; i++) {
    const dx = xs[i] - mx[seg[i]];
    Sxx += ws[i] * dx * dx;
    Sxy += ws[i] * dx * (ys[i] - my[seg[i]]);
  }
  const dof = n - segments - 1;
  if (!(Sxx > 0) || dof < 1) return null;
  const slope = Sxy / Sxx;
  let chi2 = 0;
  for (let i = 0; i < n; i++) chi2 += ws[i] * (ys[i] - my[seg[i]] - slope * (xs[i] - mx[seg[i]])) ** 2;
  const birge = Math.max(1, Math.sqrt(chi2 / dof));
  const variance = opts.spans ? correlatedVariance(xs, ws, seg, mx, Sxx, t0, t1) : overlap / Sxx;
  const V = opts.thermalVariance_rad2;
  const walk = V !== undefined && V > 0 && slope < 0 ? walkVariance(xs, ys, ws, seg, mx, Sxx, 2 * V * -slope) : 0;
  const total = Math.max(variance * birge * birge, variance + walk);
  return { rate_per_s: -slope, rate_sigma_per_s: Math.sqrt(total), n, segments, chi2, birge, thermal_variance_per_s2: walk };
}

/**
 * Variance of the slope b = Σ c_i·y_i when the y_i carry a random walk W(t) of variance
 * rate k/A(t)²: Cov(W_i, W_j) = ∫₀^min(t_i, t_j) k/A² ds, so var = ∫ k/A(s)²·(Σ_{t_i > s} c_i)² ds.
 * Within a segment Σ c_i = 0 (its intercept absorbs the walk's start), so only the
 * intervals between a segment's points count; A is taken at the start of each.
 */
function walkVariance(xs: number[], ys: number[], ws: number[], seg: number[], mx: Float64Array, Sxx: number, k: number): number {
  let v = 0;
  let i = xs.length - 1;
  while (i >= 0) {
    // walk a segment backwards, accumulating the tail sum of c
    const s = seg[i];
    let tail = (ws[i] * (xs[i] - mx[s])) / Sxx;
    let j = i - 1;
    for (; j >= 0 && seg[j] === s; j--) {
      const dt = xs[j + 1] - xs[j];
      v += ((k * Math.exp(-2 * ys[j])) * dt) * tail * tail;
      tail += (ws[j] * (xs[j] - mx[s])) / Sxx;
    }
    i = j;
  }
  return v;
}

/**
 * Variance of the slope b = Σ c_i·y_i, c_i = w_i·(x_i − x̄_seg)/Sxx, when y_i and y_j
 * correlate by the share of their windows' spans they have in common:
 * Σ_ij c_i·c_j·σ_i·σ_j·ρ_ij. Windows are in time order, so the inner loop stops at the
 * first one that no longer overlaps.
 */
function correlatedVariance(xs: number[], ws: number[], seg: number[], mx: Float64Array, Sxx: number, t0: number[], t1: number[]): number {
  const n = xs.length;
  let v = 0;
  for (let i = 0; i < n; i++) {
    const ci = (Math.sqrt(ws[i]) * (xs[i] - mx[seg[i]])) / Sxx; // c_i·σ_i = w_i·dx_i·σ_i/Sxx = √w_i·dx_i/Sxx
    v += ci * ci;
    const li = t1[i] - t0[i];
    for (let j = i + 1; j < n; j++) {
      const shared = Math.min(t1[i], t1[j]) - Math.max(t0[i], t0[j]);
      if (!(shared > 0)) break;
      const rho = shared / Math.max(li, t1[j] - t0[j]);
      v += 2 * ci * ((Math.sqrt(ws[j]) * (xs[j] - mx[seg[j]])) / Sxx) * rho;
    }
  }
  return v;
}

/**
 * Q = ω₀/(2γ) from a decay-rate estimate γ̂ ± σ and the undamped angular frequency ω₀ (rad/s),
 * second-order unbiased: ω₀·γ̂/(2·(γ̂² + σ²)), with σ_Q = ω₀·σ/(2·γ̂²) to first order.
 * Null when no decay is resolved (γ̂ ≤ 0).
 */
export function qFromDecayRate(rate: number, sigma: number, omega0: number): { q: number; q_sigma: number } | null {
  if (!(rate > 0) || !(omega0 > 0)) return null;
  return { q: (omega0 * rate) / (2 * (rate * rate + sigma * sigma)), q_sigma: (omega0 * sigma) / (2 * rate * rate) };
}
