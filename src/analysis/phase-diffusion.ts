/**
 * The part of a window's uncertainty that its residuals cannot show: noise
 * that drives the oscillator itself (thermal torque noise, and any other
 * torque noise near the resonance).
 *
 * A torque noise near the resonance kicks the swing's complex amplitude
 * Z = A·e^{iφ} about at random: Z diffuses, E|ΔZ|² = D·Δt. For A far above the
 * noise this is a random walk of the phase and of ln A, each with diffusion
 * D/(2A²) rad²/s (for thermal torque noise D = 4·k_B·T·γ/κ, the
 * fluctuation–dissipation value, so D_φ = 2·k_B·T/(κ·τ·A²)). A window's fit
 * takes the phase walk for a change of frequency and the amplitude walk for a
 * change of decay rate, and both leave nothing in the residuals. The least-
 * squares slope of a random walk of diffusion D_φ over a span W has variance
 * 6·D_φ/(5·W) (the slope's weight kernel integrated against the walk's
 * covariance min(s, u); standard least squares, worked here), so
 *
 *   var(ω) += (3/5)·D/(A²·W),   var(T) += (T²/2π)²·(3/5)·D/(A²·W),
 *   var(γ) += (3/5)·D/(A²·W).
 *
 * The same torque noise moves the equilibrium: below the resonance the angle
 * follows it, with a one-sided spectrum S_θ(f) = S_τ(f)/κ². For white torque
 * noise (viscous damping) S_θ = 2·D/ω₀², and the window's mean angle varies by
 * D/(ω₀²·W); for a loss angle constant in frequency (internal damping) S_τ
 * grows as 1/f and, at the window's own time scale f = 1/W, S_θ is larger by
 * f₀·W: var(θ_eq) += D·f₀/ω₀² (see docs/analysis.md).
 *
 * D is measured on the run's own windows, not assumed: second differences of
 * the periods (and, separately, of the decay rates) of non-overlapping windows
 * spaced 1.5 window lengths apart, x_k − 2·x_{k+m} + x_{k+2m}, have variance
 * v_k + 4·v_{k+m} + v_{k+2m} with v = σ_fit² + D·g (g the shape above), since
 * disjoint windows see independent readout noise and independent stretches of
 * the walk, and a linear drift (a slow temperature change, creep) cancels.
 * D is the value that makes d²/var look like χ²₁ over the recent triplets
 * (robustly: see solveDiffusion), so the few triplets a bump or a step spoils
 * do not move it. Before enough triplets exist, the fluctuation–dissipation
 * value stands in when κ is known.
 */
import { K_BOLTZMANN as K_B } from '../physics/constants.js';
import type { Damping } from '../physics/thermal.js';
import { medianSelect } from './median.js';

/** new triplets between two solves of D */
const REFRESH = 16;
/** median of χ² with one degree of freedom */
const CHI2_1_MEDIAN = 0.454936423119572;
/**
 * spacing of a triplet's windows, in window lengths: more than one, because
 * windows that just touch share a little of their errors (measured: a 4 %
 * correlation of neighbours' periods in thermal noise), which would make the
 * second differences read D low
 */
const SPACING = 1.5;
const TWO_PI = 2 * Math.PI;

/** The fluctuation–dissipation diffusion of the complex amplitude, D = 4·k_B·T·γ/κ (rad²/s). */
export function thermalDiffusion(temperature_K: number, kappa_Nm_per_rad: number, decayRate_per_s: number): number {
  return (4 * K_B * temperature_K * Math.max(decayRate_per_s, 0)) / kappa_Nm_per_rad;
}

/** What a window contributes: its fitted values and their fit-only (readout) standard errors. */
export interface DiffusionSample {
  t_mid_s: number;
  /** span of the window, s */
  span_s: number;
  period_s: number;
  period_fit_sigma_s: number;
  decay_rate_per_s: number;
  decay_rate_fit_sigma_per_s: number;
  amplitude_rad: number;
}

/** The extra variances of a window for a diffusion D. */
export interface ExtraVariance {
  period_s2: number;
  decay_rate_per_s2: number;
  equilibrium_rad2: number;
  /** what the same motion leaves in the residuals, per sample (thermalResidualVariance) */
  residual_rad2: number;
}

/** Shape factors g with var = D·g. */
function periodShape(period_s: number, amplitude_rad: number, span_s: number): number {
  const c = (period_s * period_s) / TWO_PI;
  return (c * c * 0.6) / (amplitude_rad * amplitude_rad * span_s);
}
function rateShape(amplitude_rad: number, span_s: number): number {
  return 0.6 / (amplitude_rad * amplitude_rad * span_s);
}

/** The damping model, for the equilibrium term. */

/** Extra variances of a window's period, decay rate and equilibrium for diffusions dPeriod (from periods), dRate (from decay rates). */
export function extraVariance(dPeriod: number, dRate: number, w: { period_s: number; amplitude_rad: number; span_s: number }, damping: Damping): ExtraVariance {
  const w0 = TWO_PI / w.period_s;
  const eqShape = damping === 'viscous' ? 1 / (w0 * w0 * w.span_s) : 1 / (w0 * w0 * w.period_s);
  return {
    period_s2: dPeriod * periodShape(w.period_s, w.amplitude_rad, w.span_s),
    decay_rate_per_s2: dRate * rateShape(w.amplitude_rad, w.span_s),
    equilibrium_rad2: dPeriod * eqShape,
    residual_rad2: thermalResidualVariance(dPeriod, w.period_s, w.span_s, damping),
  };
}

/** Options of DiffusionEstimator. */
export interface DiffusionEstimatorOptions {
  /** triplets kept, the most recent (default 480: D to about ±11 %) */
  maxTriplets?: number;
  /** fewest triplets for an estimate of its own (default 8) */
  minTriplets?: number;
}

interface Triplet {
  d: number;
  fit: number;
  shape: number;
}

/** The value of D ≥ 0 at which stat(D) — decreasing in D — falls to target. */
function solveFor(stat: (D: number) => number, target: number, ts: readonly Triplet[]): number {
  if (stat(0) <= target) return 0;
  // a scale for D: what one triplet alone would need
  let hi = 0;
  for (const t of ts) if (t.shape > 0) hi = Math.max(hi, (t.d * t.d) / t.shape);
  if (!(hi > 0)) return 0;
  let lo = 0;
  while (stat(hi) > target) hi *= 4;
  // bisection, geometric once a lower bound is found
  // to 1e-4: far inside D's own statistical uncertainty (±11 % at 480 triplets)
  for (let i = 0; i < 80 && hi - lo > 1e-4 * hi; i++) {
    const mid = lo > 0 ? Math.sqrt(lo * hi) : hi / 1024;
    if (stat(mid) > target) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

/**
 * D from triplets, robust and as efficient as a mean: first the D that makes
 * the median of r = d²/(fit + D·shape) the χ²₁ median; then, leaving out the
 * triplets with r > 25 there (beyond 5σ: a bump, a step — a normal triplet
 * lands there once in two million), the D that makes the mean of r over the
 * rest 1, as it is for χ²₁ (the 5σ cut lowers it by 1e-5).
 */
function solveDiffusion(ts: readonly Triplet[]): number {
  const r = (t: Triplet, D: number) => (t.d * t.d) / (t.fit + D * t.shape);
  const buf = new Float64Array(ts.length);
  const median = (D: number): number => {
    for (let i = 0; i < ts.length; i++) buf[i] = r(ts[i], D);
    return medianSelect(buf);
  };
  const d0 = solveFor(median, CHI2_1_MEDIAN, ts);
  const kept = ts.filter((t) => r(t, d0) < 25);
  if (kept.length < ts.length / 2) return d0;
  const mean = (D: number): number => kept.reduce((a, t) => a + r(t, D), 0) / kept.length;
  return solveFor(mean, 1, kept);
}

/**
 * Measures the diffusion D of the swing's complex amplitude from a run's
 * windows as they come (see the file comment). Push every accepted window in
 * time order. A data gap needs nothing special: the walk goes on while no data
 * come, and windows whose spacing is not one window length form no triplet.
 */
export class DiffusionEstimator {
  private readonly history: DiffusionSample[] = [];
  private readonly periodTriplets: Triplet[] = [];
  private readonly rateTriplets: Triplet[] = [];
  private readonly maxTriplets: number;
  private readonly minTriplets: number;
  private cache: { period: number; rate: number } | null = null;
  /** triplets added since the last solve */
  private added = 0;

  constructor(opts: DiffusionEstimatorOptions = {}) {
    this.maxTriplets = opts.maxTriplets ?? 480;
    this.minTriplets = opts.minTriplets ?? 8;
  }

  /** Triplets gathered so far (at most maxTriplets). */
  get triplets(): number {
    return this.periodTriplets.length;
  }

  /**
   * D from the periods and from the decay rates, rad²/s; undefined until
   * minTriplets exist. Solved again every REFRESH new triplets (D moves
   * slowly; a solve costs a few sorts of the held triplets).
   */
  estimate(): { period: number; rate: number } | undefined {
    const n = this.periodTriplets.length;
    if (n < this.minTriplets) return undefined;
    if (!this.cache || this.added >= REFRESH || n < 4 * this.minTriplets) {
      this.cache = { period: solveDiffusion(this.periodTriplets), rate: solveDiffusion(this.rateTriplets) };
      this.added = 0;
    }
    return this.cache;
  }

  /** Add a window; forms the triplet that ends at it when its two predecessors one and two window lengths back exist. */
  push(s: DiffusionSample): void {
    const h = this.history;
    const j1 = this.partner(s, SPACING * s.span_s);
    const j2 = j1 ? this.partner(s, 2 * SPACING * s.span_s) : undefined;
    if (j1 && j2) {
      const add = (list: Triplet[], t: Triplet) => {
        list.push(t);
        if (list.length > this.maxTriplets) list.shift();
      };
      add(this.periodTriplets, {
        d: j2.period_s - 2 * j1.period_s + s.period_s,
        fit: j2.period_fit_sigma_s ** 2 + 4 * j1.period_fit_sigma_s ** 2 + s.period_fit_sigma_s ** 2,
        shape: periodShape(j2.period_s, j2.amplitude_rad, j2.span_s) + 4 * periodShape(j1.period_s, j1.amplitude_rad, j1.span_s) + periodShape(s.period_s, s.amplitude_rad, s.span_s),
      });
      add(this.rateTriplets, {
        d: j2.decay_rate_per_s - 2 * j1.decay_rate_per_s + s.decay_rate_per_s,
        fit: j2.decay_rate_fit_sigma_per_s ** 2 + 4 * j1.decay_rate_fit_sigma_per_s ** 2 + s.decay_rate_fit_sigma_per_s ** 2,
        shape: rateShape(j2.amplitude_rad, j2.span_s) + 4 * rateShape(j1.amplitude_rad, j1.span_s) + rateShape(s.amplitude_rad, s.span_s),
      });
      this.added++;
    }
    h.push(s);
    // keep a little more than the triplet's reach
    while (h.length > 2 && h[0].t_mid_s < s.t_mid_s - (2 * SPACING + 0.5) * s.span_s) h.shift();
  }

  /** The held window whose middle is `lag` before s's, within a quarter of a window step. */
  private partner(s: DiffusionSample, lag: number): DiffusionSample | undefined {
    let best: DiffusionSample | undefined;
    let bestErr = Infinity;
    for (const w of this.history) {
      const err = Math.abs(s.t_mid_s - w.t_mid_s - lag);
      if (err < bestErr) { bestErr = err; best = w; }
    }
    return best && bestErr <= 0.125 * s.span_s ? best : undefined;
  }
}

/** How many triplets the fluctuation–dissipation prior is worth when blended with a measurement. */
const PRIOR_TRIPLETS = 20;

/** What the window noise model knows of the balance. */
export interface WindowNoiseModelOptions {
  /** the damping model (internal: a constant loss angle; viscous: gas) */
  damping: Damping;
  /** moment of inertia, kg·m², for the fluctuation–dissipation prior (none: no prior) */
  inertia_kg_m2?: number;
  /** temperature for the prior when a window has no temp_C, K (default 295) */
  temperature_K?: number;
  estimator?: DiffusionEstimatorOptions;
}

/**
 * The run's model of the noise the residuals cannot show: D measured on the
 * windows so far, or, before there are enough, the fluctuation–dissipation
 * value 4·k_B·T·γ/κ (κ = I·ω² from the window's own period; T from its
 * temperature channel or the stated temperature). Feed it every window's
 * result in order (`observe`); ask it for a window's extra variance (`extra`).
 */
export class WindowNoiseModel {
  private readonly estimator: DiffusionEstimator;

  constructor(private readonly opts: WindowNoiseModelOptions) {
    this.estimator = new DiffusionEstimator(opts.estimator);
  }

  /** Where D comes from now: 'measured' (the run's windows), 'thermal' (the prior) or 'none'. */
  get source(): 'measured' | 'thermal' | 'none' {
    return this.estimator.estimate() ? 'measured' : this.opts.inertia_kg_m2 ? 'thermal' : 'none';
  }

  /**
   * The extra variances of a window with these fitted values; undefined when
   * there is neither a measurement nor a prior. With both, D is their mean
   * weighted by triplets, the prior counting as PRIOR_TRIPLETS: short runs
   * get the physics, long ones their own measurement.
   */
  extra(w: { period_s: number; amplitude_rad: number; span_s: number; decay_rate_per_s: number; temp_C: number | null }): ExtraVariance | undefined {
    if (!(w.amplitude_rad > 0) || !(w.span_s > 0) || !(w.period_s > 0)) return undefined;
    const est = this.estimator.estimate();
    const I = this.opts.inertia_kg_m2;
    let prior: number | undefined;
    if (I) {
      const kappa = I * (TWO_PI / w.period_s) ** 2;
      const T = w.temp_C !== null && Number.isFinite(w.temp_C) ? w.temp_C + 273.15 : this.opts.temperature_K ?? 295;
      prior = thermalDiffusion(T, kappa, w.decay_rate_per_s);
    }
    if (!est) return prior === undefined ? undefined : extraVariance(prior, prior, w, this.opts.damping);
    if (prior === undefined) return extraVariance(est.period, est.rate, w, this.opts.damping);
    const n = this.estimator.triplets;
    const blend = (x: number) => (n * x + PRIOR_TRIPLETS * prior!) / (n + PRIOR_TRIPLETS);
    return extraVariance(blend(est.period), blend(est.rate), w, this.opts.damping);
  }

  /** Take an accepted window into the measurement (its fit-only σ's, before any extra). */
  observe(s: DiffusionSample): void {
    if ([s.period_s, s.period_fit_sigma_s, s.decay_rate_per_s, s.decay_rate_fit_sigma_per_s, s.amplitude_rad].every(Number.isFinite) && s.amplitude_rad > 0) this.estimator.push(s);
  }
}

/**
 * Fraction of a sinusoid's power at x·f₀ that a window's fit leaves in its
 * residuals, phase-averaged: the fit's columns [1, t, cos, sin, t·cos, t·sin]
 * at f₀ (the damped sine linearised in frequency and decay) over a span of
 * `periods` periods, projected out numerically (400 points, Gram–Schmidt).
 */
function residualResponse(periods: number): (x: number) => number {
  const n = 400;
  const t = Float64Array.from({ length: n }, (_, i) => (i / (n - 1) - 0.5) * periods); // in periods
  const cols = [
    (u: number) => 1, (u: number) => u,
    (u: number) => Math.cos(TWO_PI * u), (u: number) => Math.sin(TWO_PI * u),
    (u: number) => u * Math.cos(TWO_PI * u), (u: number) => u * Math.sin(TWO_PI * u),
  ];
  const basis: Float64Array[] = [];
  for (const c of cols) {
    const v = Float64Array.from(t, c);
    for (const b of basis) {
      let d = 0;
      for (let i = 0; i < n; i++) d += v[i] * b[i];
      for (let i = 0; i < n; i++) v[i] -= d * b[i];
    }
    let nn = 0;
    for (let i = 0; i < n; i++) nn += v[i] * v[i];
    const s = 1 / Math.sqrt(nn);
    for (let i = 0; i < n; i++) v[i] *= s;
    basis.push(v);
  }
  const left = (v: Float64Array): number => {
    let total = 0, kept = 0;
    for (let i = 0; i < n; i++) total += v[i] * v[i];
    for (const b of basis) {
      let d = 0;
      for (let i = 0; i < n; i++) d += v[i] * b[i];
      kept += d * d;
    }
    return Math.max(total - kept, 0) / total;
  };
  const c = new Float64Array(n), s = new Float64Array(n);
  return (x) => {
    // the grid is uniform: rotate by one step instead of two trig calls per point
    const a0 = TWO_PI * x * t[0], da = TWO_PI * x * (t[1] - t[0]);
    const cd = Math.cos(da), sd = Math.sin(da);
    c[0] = Math.cos(a0); s[0] = Math.sin(a0);
    for (let i = 1; i < n; i++) {
      c[i] = c[i - 1] * cd - s[i - 1] * sd;
      s[i] = s[i - 1] * cd + c[i - 1] * sd;
    }
    return 0.5 * (left(c) + left(s));
  };
}

const residualFactors = new Map<string, number>();

/**
 * ∫ g(x)·r(x) dx over x = f/f₀ for the thermally driven angle's spectral shape
 * g (viscous: 1/(1 − x²)²; internal: 1/(x·(1 − x²)²)) and the window's
 * residual response r: how much of the thermal motion a window of `periods`
 * periods leaves in its residuals. Q matters only where r ≈ 0 and is left out.
 */
function residualFactor(periods: number, damping: Damping): number {
  // on a grid of 1/16 period, linear between: windows are all about the same length, so a run
  // computes two or three grid values, and the factor is smooth in the span
  const u = periods * RESIDUAL_GRID;
  const k = Math.floor(u);
  const a = residualFactorAt(k / RESIDUAL_GRID, damping);
  if (u === k) return a;
  return a + (u - k) * (residualFactorAt((k + 1) / RESIDUAL_GRID, damping) - a);
}

/** Steps per period of the grid residualFactor is computed on. */
const RESIDUAL_GRID = 16;

function residualFactorAt(periods: number, damping: Damping): number {
  const key = `${periods}:${damping}`;
  let v = residualFactors.get(key);
  if (v !== undefined) return v;
  const r = residualResponse(periods);
  const g = damping === 'viscous' ? (x: number) => 1 / (1 - x * x) ** 2 : (x: number) => 1 / (x * (1 - x * x) ** 2);
  // Simpson on pieces, fine around the resonance where g is large and r small
  const simpson = (a: number, b: number, m: number): number => {
    const h = (b - a) / m;
    let acc = 0;
    for (let k = 0; k <= m; k++) {
      const x = a + k * h;
      const f = Math.abs(x - 1) < 1e-9 ? 0 : g(x) * r(x);
      acc += f * (k === 0 || k === m ? 1 : k % 2 ? 4 : 2);
    }
    return (acc * h) / 3;
  };
  v = simpson(1e-4, 0.8, 400) + simpson(0.8, 1.2, 1000) + simpson(1.2, 12, 800);
  residualFactors.set(key, v);
  return v;
}

/**
 * The variance the thermally driven motion leaves in a window's residuals,
 * per sample, rad²: (2D/ω₀²)·f₀·∫ g(x)·r(x) dx (S_θ = (2D/ω₀²)·g below and
 * above the resonance, see the file comment). What χ²_red expects beside the
 * readout noise.
 */
export function thermalResidualVariance(D: number, period_s: number, span_s: number, damping: Damping): number {
  const w0 = TWO_PI / period_s;
  return ((2 * D) / (w0 * w0)) * (1 / period_s) * residualFactor(span_s / period_s, damping);
}
