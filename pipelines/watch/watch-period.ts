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
      const base: { p: number; s: number; T: number | null }[] = [];
      let pRef = NaN;
      let tRef: number | null = null;
      let state = cusumInit();
      let coef = prior;
      let coefSigma = 0;
      let coefFitted = false;
      // trailing buffer for the temperature fit
      let bt: number[] = [], bT: number[] = [], bp: number[] = [], bs: number[] = [];
      const recent: number[] = [];
      const onWindow = (w: WindowResult): void => {
        if (w.status !== 'ok' || w.period_s === null || !Number.isFinite(w.period_s)) return;
        const p = w.period_s;
        const sp = w.period_sigma_s !== null && Number.isFinite(w.period_sigma_s) ? w.period_sigma_s : NaN;
        const T = w.temp_C !== null && Number.isFinite(w.temp_C) ? w.temp_C : null;
        const t = w.t_mid_s;
        if (!Number.isFinite(pRef)) {
          base.push({ p, s: sp, T });
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
          return;
        }
        const dT = T !== null && tRef !== null ? T - tRef : 0;
        const useCoef = correct && T !== null && tRef !== null;
        const r = p / pRef - 1 - (useCoef ? coef * dT : 0);
        const sr = Math.hypot(Number.isFinite(sp) ? sp / pRef : Infinity, useCoef ? coefSigma * dT : 0);
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
            : `period ${side > 0 ? 'up' : 'down'}: ${fmtPpm(shift)} ppm from the baseline ${pRef.toFixed(6)} s (threshold ${ppm} ppm; CUSUM ${g.toFixed(2)}, decision level ${co.h}, in units of ${ppm} ppm${useCoef && (coefFitted || prior !== 0) ? `; temperature removed at ${(coef * 1e6).toFixed(1)} ppm/K${coefFitted ? '' : ' (prior)'}` : ''})`,
          data: {
            unit: 'ppm', shift_ppm: shift * 1e6, period_s: p, baseline_period_s: pRef, cusum: g, cusum_h: co.h,
            side, temp_coefficient_ppm_per_K: useCoef ? coef * 1e6 : null, temp_coefficient_fitted: coefFitted, t_mid_s: t,
          },
        });
        if (inc) out.next(inc);
        // learn the temperature coefficient from windows that look normal
        if (correct && T !== null && !alert.active && Math.abs(r) < delta) {
          bt.push(t); bT.push(T); bp.push(p); bs.push(sp);
          let k = 0;
          while (k < bt.length && bt[k] < t - tempHorizon) k++;
          if (k > 0) { bt = bt.slice(k); bT = bT.slice(k); bp = bp.slice(k); bs = bs.slice(k); }
          const fit = bt.length >= 10 ? fitTempCoefficient(bT, bp, bs) : null;
          if (fit && fit.temp_span_K >= minSpan) {
            coef = fit.coef_per_K;
            coefSigma = fit.coef_sigma_per_K;
            coefFitted = true;
          }
        }
      };
      return { next: onWindow };
    });
}

function fmtPpm(rel: number): string {
  const v = rel * 1e6;
  return `${v >= 0 ? '+' : ''}${v.toFixed(0)}`;
}
