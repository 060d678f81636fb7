/**
 * period-drift: a two-sided CUSUM (src/analysis/cusum.ts) on the window
 * periods relative to a baseline, with the temperature coefficient removed.
 *
 * Baseline: the weighted mean period (and mean temperature) of the first
 * `baselineWindows` ok windows of the run — a fixed reference, so that a
 * slow change is caught as well as a step (a trailing reference would follow
 * it). The temperature coefficient is refitted on every window from the
 * trailing `tempHorizon_s` of windows that were not in alert and within one
 * threshold of the baseline, once their temperatures span `tempMinSpan_K`.
 *
 * Amplitude: an anelastic fibre's period follows the swing's amplitude, so a
 * swing decaying over a day moves the period with nothing wrong. Given the
 * fibre's slope s (`amplitudeSlope_s_per_rad`, e.g. from its earlier runs,
 * `fibrewatch fibre`), s·(A − A_ref) is removed from each window's shift, A_ref
 * the baseline's mean amplitude. Without one, the trailing windows that looked
 * normal give it (jointly with the temperature term,
 * src/analysis/amplitude-slope.ts), but only once the swing has been
 * re-excited among them (its amplitude rose by 10 % or more: a knock, a
 * configuration switch, a deliberate kick), the slope is beyond 3σ, and the
 * amplitude explains the periods better than a drift of the same windows does,
 * straight or curved (a quadratic in time; χ² lower by 9 × the overlap). Over a
 * free decay alone the amplitude falls as smoothly as time passes, and a drift
 * of the period (a room's daily swing without a thermometer, creep of the
 * fibre) would be taken for anelasticity: it then hid a real change, or,
 * extrapolated, raised a false one. A quiet decay therefore needs the fibre's
 * slope given.
 *
 * Raise rule: CUSUM statistic > h AND the latest window's shift ≥
 * raiseFraction × period_change_ppm on the same side (see the option) AND
 * that shift is beyond 3σ of the window's own (honest) σ, which is at most a
 * sixth of the change: a swing that has decayed into the noise cannot raise.
 */
import type { Observable } from 'rxjs';
import type { Incident } from '../../src/domain/events.js';
import type { WindowResult } from '../../src/domain/window-result.js';
import { cusumInit, cusumOptions, cusumStatistic, cusumStep, type CusumOptions } from '../../src/analysis/cusum.js';
import { fitTempCoefficient } from '../../src/analysis/temp-coefficient.js';
import { fitAmplitudeSlope, periodAmplitude } from '../../src/analysis/amplitude-slope.js';
import { weightedLeastSquares } from '../../src/analysis/weighted-least-squares.js';
import { weightedMean } from '../../src/analysis/weighted-stats.js';
import { createAlertState, type AlertTuning } from './alert-state.js';
import { operate } from '../operate.js';

/** Options of watchPeriod (`updateEvery_s` default 1800 s). */
export interface WatchPeriodOptions extends AlertTuning {
  /** change to detect, ppm (station alerts.period_change_ppm; default 300) */
  periodChange_ppm?: number;
  /** ok windows averaged for the baseline (default 30) */
  baselineWindows?: number;
  /** remove the fitted temperature coefficient (default true) */
  correctTemperature?: boolean;
  /** coefficient to use until one is fitted, ppm/K (default 0) */
  tempCoefficient_ppm_per_K?: number;
  /** trailing horizon of the coefficient fit, s (default 86400) */
  tempHorizon_s?: number;
  /** least temperature span before the fit is used, K (default 0.3) */
  tempMinSpan_K?: number;
  /** the fibre's known period-amplitude slope, s/rad, and its σ (default: learned from the run, see above) */
  amplitudeSlope_s_per_rad?: number;
  amplitudeSlopeSigma_s_per_rad?: number;
  /** learn the amplitude slope from the run when none is given (default true) */
  correctAmplitude?: boolean;
  /** least relative span of the amplitude before a learned slope is used (default 0.1) */
  amplitudeMinSpan?: number;
  /** window_periods/step_periods of the windows, for the learned slope's σ (default 4, the station's defaults) */
  overlap?: number;
  /** CUSUM tuning in units of the change (see cusum.ts) */
  cusum?: CusumOptions;
  /**
   * to raise, the latest window's shift must also reach this fraction of the change, on the CUSUM's side
   * (default 0.7): the CUSUM (k = ¼) builds up under any sustained shift above 75 ppm of 300, and a daily
   * swing of ±100 ppm with no temperature channel to remove it must not read as a 300 ppm change
   */
  raiseFraction?: number;
}

/** A raising window's shift must exceed this many of its own σ's … */
const SIGNIFICANCE_Z = 3;
/**
 * … and its σ be at most this share of the change to detect: with the 0.7 share above a raising shift is
 * then ≥ 4σ, which honest, correlated windows (neighbours share most of their phase walk) reach by chance
 * about once in a few weeks rather than daily
 */
const RESOLUTION_SHARE = 1 / 6;

/** Watch the window periods for a change beyond period_change_ppm; emits period-drift incidents. */
export function watchPeriod(opts: WatchPeriodOptions = {}) {
  const ppm = opts.periodChange_ppm ?? 300;
  const delta = ppm * 1e-6;
  const nBase = opts.baselineWindows ?? 30;
  const correct = opts.correctTemperature ?? true;
  const prior = (opts.tempCoefficient_ppm_per_K ?? 0) * 1e-6;
  const tempHorizon = opts.tempHorizon_s ?? 86400;
  const minSpan = opts.tempMinSpan_K ?? 0.3;
  const priorSlope = opts.amplitudeSlope_s_per_rad;
  const learnAmp = priorSlope === undefined && (opts.correctAmplitude ?? true);
  const ampMinSpan = opts.amplitudeMinSpan ?? 0.1;
  const overlap = opts.overlap ?? 4;
  if (priorSlope !== undefined && !Number.isFinite(priorSlope)) throw new RangeError(`watchPeriod: amplitudeSlope_s_per_rad must be finite, got ${priorSlope}`);
  const co = cusumOptions(opts.cusum);
  const raiseFrac = opts.raiseFraction ?? 0.7;
  if (!(raiseFrac >= 0 && raiseFrac <= 1)) throw new RangeError(`watchPeriod: raiseFraction must be in [0, 1], got ${raiseFrac}`);
  if (!(delta > 0)) throw new RangeError(`watchPeriod: periodChange_ppm must be > 0, got ${ppm}`);
  if (!(nBase >= 1)) throw new RangeError(`watchPeriod: baselineWindows must be ≥ 1, got ${nBase}`);
  return (source: Observable<WindowResult>) =>
    operate<WindowResult, Incident>(source, (out) => {
      const alert = createAlertState({
        kind: 'period-drift', severity: 'warning',
        updateEvery_s: opts.updateEvery_s ?? 1800,
        clearFraction: opts.clearFraction, clearAfter: opts.clearAfter,
      });
      const base: { p: number; s: number; T: number | null; A: number }[] = [];
      let pRef = NaN;
      let tRef: number | null = null;
      let aRef = NaN;
      // the amplitude slope in use, s/rad (0: none) and its σ
      let ampSlope = priorSlope ?? 0;
      let ampSlopeSigma = priorSlope !== undefined ? Math.abs(opts.amplitudeSlopeSigma_s_per_rad ?? 0) : 0;
      let ampLearned = false;
      let state = cusumInit();
      let coef = prior;
      let coefSigma = 0;
      let coefFitted = false;
      // trailing buffer for the temperature fit
      let bt: number[] = [], bT: number[] = [], bp: number[] = [], bs: number[] = [], bA: number[] = [];
      const recent: number[] = [];
      const onWindow = (w: WindowResult): void => {
        if (w.status !== 'ok' || w.period_s === null || !Number.isFinite(w.period_s)) return;
        const p = w.period_s;
        const sp = w.period_sigma_s !== null && Number.isFinite(w.period_sigma_s) ? w.period_sigma_s : NaN;
        const T = w.temp_C !== null && Number.isFinite(w.temp_C) ? w.temp_C : null;
        // the amplitude the window's period belongs to (a hair above the one at its middle)
        const A = w.amplitude_rad !== null && Number.isFinite(w.amplitude_rad) ? Math.abs(periodAmplitude(w)) : NaN;
        const t = w.t_mid_s;
        if (!Number.isFinite(pRef)) {
          base.push({ p, s: sp, T, A });
          if (base.length < nBase) return;
          // weighted mean, σ floored at 1 ppm of the median so one over-confident window cannot set the
          // baseline; a window without σ counts as 10 ppm
          const med = base.map((b) => b.p).sort((a, b) => a - b)[base.length >> 1];
          const m = weightedMean(base.map((b) => b.p), base.map((b) => (Number.isFinite(b.s) ? b.s : med * 1e-5)), { sigmaFloor: med * 1e-6, birge: false });
          if (!m) return;
          let sT = 0, nT = 0;
          for (const b of base) if (b.T !== null) { sT += b.T; nT++; }
          pRef = m.mean;
          tRef = nT > 0 ? sT / nT : null;
          const amps = base.map((b) => b.A).filter(Number.isFinite);
          aRef = amps.length ? amps.reduce((a, b) => a + b, 0) / amps.length : NaN;
          return;
        }
        const dT = T !== null && tRef !== null ? T - tRef : 0;
        const useCoef = correct && T !== null && tRef !== null;
        const dA = ampSlope !== 0 && Number.isFinite(A) && Number.isFinite(aRef) ? A - aRef : 0;
        const r = p / pRef - 1 - (useCoef ? coef * dT : 0) - (ampSlope * dA) / pRef;
        const sr = Math.hypot(Number.isFinite(sp) ? sp / pRef : Infinity, useCoef ? coefSigma * dT : 0, (ampSlopeSigma * dA) / pRef);
        state = cusumStep(state, r, sr, delta, co);
        const { g, side } = cusumStatistic(state);
        recent.push(r);
        if (recent.length > 3) recent.shift();
        // while raised: median of the last 3 (one glitch cannot swing an update); when it may raise now: the
        // latest window, which holds most of a step (its predecessors overlap the time before it)
        const shift = alert.active ? [...recent].sort((a, b) => a - b)[recent.length >> 1] : r;
        const inc = alert.step({
          t,
          stat: g,
          statThreshold: co.h,
          // and beyond 3σ of its own, from a window that resolves the change (σ ≤ ⅙ of it): when the swing has
          // decayed into the noise its period wanders by hundreds of ppm within honest error bars, and that is
          // not a change of the fibre
          significant: Math.abs(r) >= raiseFrac * delta && Math.sign(r) === side && sr <= RESOLUTION_SHARE * delta && Math.abs(r) >= SIGNIFICANCE_Z * sr,
          value: shift * 1e6,
          threshold: ppm,
          message: (st) => st === 'cleared'
            ? `period back within ${(alert.clearFraction * ppm).toFixed(0)} ppm of the baseline ${pRef.toFixed(6)} s: ${fmtPpm(shift)} ppm now`
            : `period ${side > 0 ? 'up' : 'down'}: ${fmtPpm(shift)} ppm from the baseline ${pRef.toFixed(6)} s (threshold ${ppm} ppm; CUSUM ${g.toFixed(2)}, decision level ${co.h}, in units of ${ppm} ppm${useCoef && (coefFitted || prior !== 0) ? `; temperature removed at ${(coef * 1e6).toFixed(1)} ppm/K${coefFitted ? '' : ' (prior)'}` : ''}${dA !== 0 ? `; swing amplitude removed at ${ampSlope.toPrecision(3)} s/rad${ampLearned ? '' : ' (given)'}` : ''})`,
          data: {
            unit: 'ppm', shift_ppm: shift * 1e6, period_s: p, baseline_period_s: pRef, cusum: g, cusum_h: co.h,
            side, temp_coefficient_ppm_per_K: useCoef ? coef * 1e6 : null, temp_coefficient_fitted: coefFitted, t_mid_s: t,
            amplitude_slope_s_per_rad: ampSlope !== 0 ? ampSlope : null, amplitude_slope_learned: ampLearned,
          },
        });
        if (inc) out.next(inc);
        // learn the temperature coefficient (and the amplitude slope) from windows that look normal
        if (((correct && T !== null) || (learnAmp && Number.isFinite(A))) && !alert.active && Math.abs(r) < delta) {
          bt.push(t); bT.push(T ?? NaN); bp.push(p); bs.push(sp); bA.push(A);
          let k = 0;
          while (k < bt.length && bt[k] < t - tempHorizon) k++;
          if (k > 0) { bt = bt.slice(k); bT = bT.slice(k); bp = bp.slice(k); bs = bs.slice(k); bA = bA.slice(k); }
          if (bt.length < 10) return;
          const tFit = correct && bT.every(Number.isFinite) ? fitTempCoefficient(bT, bp, bs) : null;
          const withT = tFit !== null && tFit.temp_span_K >= minSpan;
          if (learnAmp && learnAmplitude(withT)) return;
          if (tFit && withT) {
            coef = tFit.coef_per_K;
            coefSigma = tFit.coef_sigma_per_K;
            coefFitted = true;
          }
        }
      };
      /** Adopt the buffer's amplitude slope (and its joint temperature term) when it passes the tests above; true when adopted. */
      const learnAmplitude = (withT: boolean): boolean => {
        // re-excited: some window's amplitude is 10 % above the lowest before it (checked first: it is cheap,
        // and in a free decay it fails and spares the two fits below on every window)
        let low = Infinity, rose = false;
        for (const a of bA) { if (a > 1.1 * low) { rose = true; break; } low = Math.min(low, a); }
        const o = { temp_C: withT ? bT : null, tempMinSpan_K: minSpan, overlap };
        const af = rose ? fitAmplitudeSlope(bA, bp, bs, o) : null;
        // the same windows against a drift, straight and curved
        const drift = af ? Math.min(driftChi2(bt, bp, bs, withT ? bT : null, 1), driftChi2(bt, bp, bs, withT ? bT : null, 2)) : Infinity;
        const ok = af !== null && Number.isFinite(drift)
          && af.amplitude_max_rad - af.amplitude_min_rad >= ampMinSpan * af.amplitude_ref_rad
          && Math.abs(af.slope_s_per_rad) >= SIGNIFICANCE_Z * af.slope_sigma_s_per_rad
          && af.chi2 <= drift - 9 * overlap;
        if (!ok) {
          ampSlope = 0; ampSlopeSigma = 0; ampLearned = false;
          return false;
        }
        ampSlope = af.slope_s_per_rad;
        ampSlopeSigma = af.slope_sigma_s_per_rad;
        ampLearned = true;
        if (af.temperature_coefficient_s_per_K !== null) {
          coef = af.temperature_coefficient_s_per_K / pRef;
          coefSigma = af.temperature_coefficient_sigma_s_per_K! / pRef;
          coefFitted = true;
        }
        return true;
      };
      return { next: onWindow };
    });
}

/** χ² of the periods about a polynomial drift in time of the given order (plus the temperature term); Infinity when it cannot be fitted. */
function driftChi2(t: number[], p: number[], s: number[], temp: number[] | null, order: number): number {
  const n = t.length, cols = 1 + order + (temp ? 1 : 0);
  const t0 = t[0], span = Math.max(t[n - 1] - t0, 1);
  let tm = 0;
  if (temp) tm = temp.reduce((a, b) => a + b, 0) / n;
  const X = new Float64Array(n * cols);
  for (let i = 0; i < n; i++) {
    const u = (t[i] - t0) / span;
    for (let k = 0; k <= order; k++) X[i * cols + k] = u ** k;
    if (temp) X[i * cols + order + 1] = temp[i] - tm;
  }
  const f = weightedLeastSquares(X, cols, p.map((x) => x - p[0]), s.map((x) => (Number.isFinite(x) && x > 0 ? 1 / (x * x) : 0)));
  return f ? f.chi2 : Infinity;
}

function fmtPpm(rel: number): string {
  const v = rel * 1e6;
  return `${v >= 0 ? '+' : ''}${v.toFixed(0)}`;
}
