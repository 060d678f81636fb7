/**
 * One window from samples to a stored result: FFT seed (warm-started from the
 * previous window's period) → damped-sine fit → its covariance scaled for the
 * decimation and widened by what the residuals cannot show (the phase and
 * amplitude diffusion of a driven oscillator, phase-diffusion.ts) → derived
 * quantities from that covariance. Pure: the pipeline's `analyse` operator and
 * the one-shot `fit` command both call it.
 */
import { FITTED_FIELDS, type WindowResult } from '../domain/window-result.js';
import { periodSeed } from './period-seed.js';
import { fitDampedSine, judgeOscillation, type DampedSineFit } from './damped-sine.js';
import { FIT_STATUS } from './fit-status.js';
import { noiseFromDifferences } from './difference-noise.js';
import { nextPow2, realSpectrumPower } from './fft.js';
import { deriveQuantities, type DeriveContext } from './derive.js';
import type { ExtraVariance } from './phase-diffusion.js';

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
  /**
   * the readout noise that reached the fitted samples: its variance per sample
   * (rad², after the anti-alias filter) and the factor its share of the fit's
   * variance must be multiplied by (band-limited after decimation: 1/(M·Σh²),
   * decimate.ts). Default: measured on the residuals' differences, factor 1
   * (samples at the input rate).
   */
  readout?: { variance_rad2: number; scale2: number };
  /**
   * what the residuals cannot show (phase-diffusion.ts): variances added to the
   * fit's, after the decimation scale, before the derived quantities
   */
  extraVariance?: (w: { period_s: number; amplitude_rad: number; span_s: number; decay_rate_per_s: number; temp_C: number | null }) => ExtraVariance | undefined;
}

/** The fit's own standard errors (readout noise only, decimation scale applied). */
export interface FitOnlySigmas {
  period_sigma_s: number;
  decay_rate_sigma_per_s: number;
  equilibrium_sigma_rad: number;
}

/** The full result with the fit's covariance kept for callers that need it. */
export interface WindowAnalysis {
  result: WindowResult;
  fit: DampedSineFit | null;
  /** for an 'ok' window: the fit's own σ's, before the extra variance */
  fitOnly?: FitOnlySigmas;
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
  // the acceptance checks wait until the σ's are complete (judgeOscillation below)
  const fit = fitDampedSine(w.t, w.y, { mask: w.mask, seed, tMid, minPeriods: opts.minPeriods, judge: false });
  const r = emptyResult(w, fit.status, fit.samples);
  r.temp_C = meanFinite(w.temp);
  if (fit.status !== 'ok') return { result: r, fit };
  const resid = residuals(w, fit);
  // the fit's covariance is s²·C₀ with s² the residual variance: the readout noise's share of s² is
  // band-limited after decimation (its σ's are low by √scale2), the rest (noise driven through the
  // pendulum, in band) is not
  const s2 = fit.ssr! / Math.max(fit.samples - 6, 1);
  const ro = opts.readout ?? { variance_rad2: noiseFromDifferences(resid.r, resid.mask) ** 2, scale2: 1 };
  const vr = Number.isFinite(ro.variance_rad2) ? Math.min(ro.variance_rad2, s2) : s2;
  const kScale = s2 > 0 ? (s2 - vr + vr * ro.scale2) / s2 : ro.scale2;
  const cov = fit.covariance!.map((row) => row.map((v) => v * kScale));
  const sd = (i: number) => Math.sqrt(Math.max(cov[i][i], 0));
  const fitOnly: FitOnlySigmas = { period_sigma_s: sd(4), decay_rate_sigma_per_s: sd(5), equilibrium_sigma_rad: sd(0) };
  const extra = opts.extraVariance?.({ period_s: fit.period_s!, amplitude_rad: fit.amplitude_rad!, span_s: w.t_end_s - w.t_start_s, decay_rate_per_s: fit.decay_rate_per_s!, temp_C: r.temp_C });
  if (extra) {
    cov[4][4] += extra.period_s2;
    cov[5][5] += extra.decay_rate_per_s2;
    cov[0][0] += extra.equilibrium_rad2;
  }
  const rate = fit.decay_rate_per_s!;
  // accepted only when the oscillation stands out: against its σ, against the residuals' own spectrum
  // near the swing (a random walk or drift fits a "sine" too), and above rounding
  const local = localNoiseAmplitude(resid.r, resid.mask, w.t, fit.period_s!);
  const floor = Math.max(5 * local, 1e3 * Number.EPSILON * maxAbs(w.y, w.mask));
  const verdict = judgeOscillation({ amplitude_rad: fit.amplitude_rad!, amplitude_sigma_rad: sd(2), decay_rate_per_s: rate, decay_rate_sigma_per_s: sd(5), period_s: fit.period_s! }, floor);
  if (verdict) return { result: { ...r, status: verdict.status }, fit: { ...fit, status: verdict.status, message: verdict.message } };
  const expected = vr + (extra?.residual_rad2 ?? 0);
  const chi2 = expected > 0 ? s2 / expected : null;
  // with a noise model the residuals' size is predicted: far beyond it, and a sizable share of the swing,
  // the damped sine is not what the data are (a window across a period step misfits by a percent or so of
  // the swing and keeps its meaning: it is kept)
  if (extra && chi2 !== null && chi2 > CHI2_CEILING && Math.sqrt(s2) > MISFIT_SHARE * fit.amplitude_rad!) {
    const message = `residual variance ${chi2.toFixed(0)}× what readout and thermal motion leave (ceiling ${CHI2_CEILING}), rms ${(Math.sqrt(s2) / fit.amplitude_rad!).toFixed(2)} of the amplitude`;
    return { result: { ...r, status: FIT_STATUS.residualExcess }, fit: { ...fit, status: FIT_STATUS.residualExcess, message } };
  }
  const d = deriveQuantities({ period_s: fit.period_s, decay_rate_per_s: rate, covariance: cov }, opts.derive);
  Object.assign(r, {
    period_s: fit.period_s, period_sigma_s: sd(4),
    decay_time_s: fit.decay_time_s, decay_time_sigma_s: fit.decay_time_s === null ? null : sd(5) / (rate * rate),
    decay_rate_per_s: rate, decay_rate_sigma_per_s: sd(5),
    q: d.q, q_sigma: d.q_sigma,
    amplitude_rad: fit.amplitude_rad, amplitude_sigma_rad: sd(2),
    equilibrium_rad: fit.equilibrium_rad, equilibrium_sigma_rad: sd(0),
    drift_rad_per_s: fit.drift_rad_per_s, drift_sigma_rad_per_s: sd(1),
    phase_rad: fit.phase_rad, residual_rms_rad: fit.residual_rms_rad,
    chi2_red: chi2,
    kappa_Nm_per_rad: d.kappa_Nm_per_rad, kappa_sigma_Nm_per_rad: d.kappa_sigma_Nm_per_rad,
    shear_modulus_Pa: d.shear_modulus_Pa, shear_modulus_sigma_Pa: d.shear_modulus_sigma_Pa,
  });
  return { result: r, fit, fitOnly };
}

/** χ²_red above which a window is rejected when a noise model predicts its residuals … */
const CHI2_CEILING = 100;
/** … and its residual rms is above this share of the amplitude. */
const MISFIT_SHARE = 0.1;

/** The fit's residuals at the window's samples (masked ones 0 and marked). */
function residuals(w: WindowSamples, fit: DampedSineFit): { r: Float64Array; mask: Uint8Array } {
  const n = w.t.length;
  const r = new Float64Array(n);
  const mask = new Uint8Array(n);
  const tMid = fit.t_mid_s;
  const om = (2 * Math.PI) / fit.period_s!;
  const g = fit.decay_rate_per_s!, A = fit.amplitude_rad!, ph = fit.phase_rad!;
  for (let i = 0; i < n; i++) {
    if ((w.mask && w.mask[i]) || !Number.isFinite(w.y[i])) { mask[i] = 1; continue; }
    const u = w.t[i] - tMid;
    r[i] = w.y[i] - (fit.equilibrium_rad! + fit.drift_rad_per_s! * u + A * Math.exp(-g * u) * Math.cos(om * u + ph));
  }
  return { r, mask };
}

function maxAbs(y: Float64Array, mask?: Uint8Array): number {
  let m = 0;
  for (let i = 0; i < y.length; i++) if (!(mask && mask[i]) && Number.isFinite(y[i])) m = Math.max(m, Math.abs(y[i]));
  return m;
}

/**
 * The amplitude that noise alone would give a sine fitted over the window,
 * √(S/W), S the one-sided spectral density of the residuals beside the swing
 * (0.3–0.6 and 1.4–2.5 × its frequency, outside the fit's main lobe; on each
 * side the median of the Hann periodogram's bins over ln 2, their mean for
 * χ²₂, and the larger side). For
 * white noise this is the amplitude's standard error; for red noise (a random
 * walk, a drifting record) it is what a spurious "oscillation" would reach.
 */
function localNoiseAmplitude(r: Float64Array, mask: Uint8Array, t: Float64Array, period_s: number): number {
  const n = r.length;
  if (n < 16) return 0;
  const dt = (t[n - 1] - t[0]) / (n - 1);
  const x = new Float64Array(n);
  let sw2 = 0;
  for (let i = 0; i < n; i++) {
    const hw = 0.5 * (1 - Math.cos((2 * Math.PI * i) / (n - 1)));
    sw2 += hw * hw;
    x[i] = mask[i] ? 0 : r[i] * hw;
  }
  const nfft = nextPow2(4 * n);
  const p = realSpectrumPower(x, nfft);
  const f0 = 1 / period_s, df = 1 / (nfft * dt);
  const below: number[] = [], above: number[] = [];
  for (let k = 1; k < p.length; k++) {
    const f = (k * df) / f0;
    const psd = (2 * dt * p[k]) / sw2;
    if (f >= 0.3 && f <= 0.6) below.push(psd);
    else if (f >= 1.4 && f <= 2.5) above.push(psd);
  }
  // the larger side: a red spectrum (a walk, a drift) is high below the swing, a blue one above
  const median = (v: number[]) => (v.length ? v.sort((a, b) => a - b)[v.length >> 1] : 0);
  const S = Math.max(median(below), median(above)) / Math.LN2;
  return Math.sqrt(S / (n * dt));
}
