/**
 * One window from samples to a stored result: FFT seed (warm-started from the
 * previous window's period) → damped-sine fit → derived quantities. Pure: the
 * pipeline's `analyse` operator and the one-shot `fit` command both call it.
 */
import { FITTED_FIELDS, SIGMA_FIELDS, type WindowResult } from '../domain/window-result.js';
import { periodSeed } from './period-seed.js';
import { fitDampedSine, type DampedSineFit } from './damped-sine.js';
import { deriveQuantities, type DeriveContext } from './derive.js';

/** What a window holds: uniformly spaced samples, a mask (nonzero = exclude), optional temperatures. */
export interface WindowSamples {
  index: number;
  t: Float64Array;
  y: Float64Array;
  mask?: Uint8Array;
  /**
   * samples the FFT seed leaves out (default `mask`): saturated samples hold
   * their clipped angle, which still carries the swing's sign and so the
   * fundamental — the seed may use them where the fit must not
   */
  seedMask?: Uint8Array;
  temp?: Float64Array;
  t_start_s: number;
  t_end_s: number;
  /** previous window's period, s: the seed searches near it first */
  periodHint_s?: number;
}

export interface WindowAnalysisOptions {
  derive?: DeriveContext;
  /** least number of periods in a window (default 1.5) */
  minPeriods?: number;
  /** multiply every standard uncertainty by this (band-limited noise after decimation; default 1) */
  sigmaScale?: number;
}

/** The full result with the fit's covariance kept for callers that need it. */
export interface WindowAnalysis {
  result: WindowResult;
  fit: DampedSineFit | null;
}

/** A result with every fitted number null (for rejected windows). */
export function emptyResult(w: Pick<WindowSamples, 'index' | 't_start_s' | 't_end_s'>, status: string, samples: number): WindowResult {
  const r = { index: w.index, t_start_s: w.t_start_s, t_mid_s: (w.t_start_s + w.t_end_s) / 2, t_end_s: w.t_end_s, samples, status, temp_C: null } as WindowResult;
  for (const k of FITTED_FIELDS) (r as unknown as Record<string, null>)[k] = null;
  return r;
}

function meanFinite(a: Float64Array | undefined, mask?: Uint8Array): number | null {
  if (!a) return null;
  let s = 0, n = 0;
  for (let i = 0; i < a.length; i++) if (Number.isFinite(a[i]) && !(mask && mask[i])) { s += a[i]; n++; }
  return n ? s / n : null;
}

/** Analyse one window; never throws for bad data — the status says what went wrong. */
export function analyseWindow(w: WindowSamples, opts: WindowAnalysisOptions = {}): WindowAnalysis {
  const tMid = (w.t_start_s + w.t_end_s) / 2;
  let used = 0;
  for (let i = 0; i < w.y.length; i++) if (!(w.mask && w.mask[i])) used++;
  if (used < 20) return { result: { ...emptyResult(w, 'too-few-samples', used), temp_C: meanFinite(w.temp) }, fit: null };
  const seed = periodSeed(w.t, w.y, { mask: w.seedMask ?? w.mask, hint_s: w.periodHint_s, tMid });
  if (!seed.ok) return { result: { ...emptyResult(w, seed.reason ?? 'no-oscillation', used), temp_C: meanFinite(w.temp) }, fit: null };
  const fit = fitDampedSine(w.t, w.y, { mask: w.mask, seed, tMid, minPeriods: opts.minPeriods });
  const r = emptyResult(w, fit.status, fit.samples);
  r.temp_C = meanFinite(w.temp);
  if (fit.status !== 'ok') return { result: r, fit };
  const d = deriveQuantities(fit, opts.derive);
  Object.assign(r, {
    period_s: fit.period_s, period_sigma_s: fit.period_sigma_s,
    decay_time_s: fit.decay_time_s, decay_time_sigma_s: fit.decay_time_sigma_s,
    q: d.q, q_sigma: d.q_sigma,
    amplitude_rad: fit.amplitude_rad, amplitude_sigma_rad: fit.amplitude_sigma_rad,
    equilibrium_rad: fit.equilibrium_rad, equilibrium_sigma_rad: fit.equilibrium_sigma_rad,
    drift_rad_per_s: fit.drift_rad_per_s, drift_sigma_rad_per_s: fit.drift_sigma_rad_per_s,
    phase_rad: fit.phase_rad, residual_rms_rad: fit.residual_rms_rad, chi2_red: fit.chi2_red,
    kappa_Nm_per_rad: d.kappa_Nm_per_rad, kappa_sigma_Nm_per_rad: d.kappa_sigma_Nm_per_rad,
    shear_modulus_Pa: d.shear_modulus_Pa, shear_modulus_sigma_Pa: d.shear_modulus_sigma_Pa,
  });
  const k = opts.sigmaScale ?? 1;
  if (k !== 1) {
    for (const f of SIGMA_FIELDS) {
      const v = r[f];
      if (v !== null) (r as unknown as Record<string, number>)[f] = v * k;
    }
  }
  return { result: r, fit };
}
