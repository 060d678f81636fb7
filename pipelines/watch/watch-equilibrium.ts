/**
 * equilibrium-drift: the robust rate of the equilibrium angle over a trailing
 * horizon (Theil–Sen, src/analysis/robust-trend.ts), judged against the
 * station's alerts.equilibrium_rate_rad_per_hour.
 *
 * Significance rule: raise when |rate| > threshold AND
 * (|rate| − threshold)/σ_rate > z (one-sided, z = 2 by default, ≈ 2.3 %
 * chance that a rate exactly at the threshold raises). Clear after
 * `clearAfter` evaluations in a row with |rate| < clearFraction × threshold
 * (defaults 3 and 0.7).
 * While raised, a log-creep fit over the data since the drift began (at most
 * horizon_h back) gives "settled in about N h".
 */
import type { Observable } from 'rxjs';
import type { Incident } from '../../src/domain/events.js';
import type { WindowResult } from '../../src/domain/window-result.js';
import { robustTrend } from '../../src/analysis/robust-trend.js';
import { fitLogCreep, forecastSettle, type SettleForecast } from '../../src/analysis/log-creep.js';
import { createAlertState, type AlertTuning } from './alert-state.js';
import { operate } from '../operate.js';

/** Options of watchEquilibrium (`updateEvery_s` default 1800 s). */
export interface WatchEquilibriumOptions extends AlertTuning {
  /** alert threshold, rad/h (station alerts.equilibrium_rate_rad_per_hour; default 5e-6) */
  threshold_rad_per_hour?: number;
  /** trailing horizon of the rate estimate, s (default 3600) */
  rateHorizon_s?: number;
  /** longest stretch the creep fit looks back, h (station alerts.horizon_h; default 6) */
  horizon_h?: number;
  /** variance inflation for overlapping windows: window_periods/step_periods (default 4) */
  overlap?: number;
  /** one-sided significance in σ of the excess over the threshold (default 2) */
  significanceZ?: number;
  /**
   * fewest windows the rate is judged on (default 12): when the rate horizon
   * holds fewer (long periods: one window per period), it reaches back to the
   * last minPoints windows, at most maxRateHorizon_s
   */
  minPoints?: number;
  /** longest the rate horizon is stretched to hold minPoints windows, s (default 4·rateHorizon_s) */
  maxRateHorizon_s?: number;
  /** least time between two refits of the creep model while raised, s (default 600) */
  creepRefit_s?: number;
}

/** Watch the equilibrium of successive windows for drift; emits equilibrium-drift incidents. */
export function watchEquilibrium(opts: WatchEquilibriumOptions = {}) {
  const thrH = opts.threshold_rad_per_hour ?? 5e-6;
  const thr = thrH / 3600; // rad/s inside
  const horizon = opts.rateHorizon_s ?? 3600;
  const fitHorizon = (opts.horizon_h ?? 6) * 3600;
  const overlap = opts.overlap ?? 4;
  const z = opts.significanceZ ?? 2;
  const minPoints = opts.minPoints ?? 12;
  const maxHorizon = opts.maxRateHorizon_s ?? 4 * horizon;
  if (!(thr > 0)) throw new RangeError(`watchEquilibrium: threshold_rad_per_hour must be > 0, got ${thrH}`);
  if (!(horizon > 0)) throw new RangeError(`watchEquilibrium: rateHorizon_s must be > 0, got ${horizon}`);
  const refitEvery = opts.creepRefit_s ?? 600;
  if (!(minPoints >= 3)) throw new RangeError(`watchEquilibrium: minPoints must be ≥ 3, got ${minPoints}`);
  if (!(maxHorizon >= horizon)) throw new RangeError(`watchEquilibrium: maxRateHorizon_s must be ≥ rateHorizon_s, got ${maxHorizon}`);
  const keep = Math.max(maxHorizon, fitHorizon);
  return (source: Observable<WindowResult>) =>
    operate<WindowResult, Incident>(source, (out) => {
      const alert = createAlertState({
        kind: 'equilibrium-drift', severity: 'warning',
        updateEvery_s: opts.updateEvery_s ?? 1800,
        clearFraction: opts.clearFraction, clearAfter: opts.clearAfter,
      });
      let ts: number[] = [];
      let ys: number[] = [];
      let ss: number[] = [];
      let head = 0;
      let lastFitT = -Infinity;
      let forecast: SettleForecast | null = null;
      let creep: Record<string, unknown> | undefined;
      const onWindow = (w: WindowResult): void => {
        if (w.status !== 'ok' || w.equilibrium_rad === null || !Number.isFinite(w.equilibrium_rad)) return;
        const t = w.t_mid_s;
        ts.push(t); ys.push(w.equilibrium_rad); ss.push(w.equilibrium_sigma_rad ?? NaN);
        while (head < ts.length && ts[head] < t - keep) head++;
        if (head > 2048) { ts = ts.slice(head); ys = ys.slice(head); ss = ss.slice(head); head = 0; }
        let i0 = ts.length;
        while (i0 > head && ts[i0 - 1] >= t - horizon) i0--;
        // a long period gives few windows per horizon: reach back to minPoints windows (bounded)
        if (ts.length - i0 < minPoints && ts.length - head >= minPoints && t - ts[ts.length - minPoints] <= maxHorizon) i0 = ts.length - minPoints;
        if (ts.length - i0 < minPoints || t - ts[i0] < 0.5 * horizon) return;
        const tr = robustTrend(ts.slice(i0), ys.slice(i0), { inflation: overlap });
        if (!tr) return;
        const rate = tr.slope;
        const sigma = tr.slope_sigma;
        const excess = (Math.abs(rate) - thr) / (sigma > 0 ? sigma : Number.MIN_VALUE);
        const significant = Math.abs(rate) > thr && excess > z;
        const willRaise = !alert.active && significant;
        if (!alert.active && !willRaise) { forecast = null; creep = undefined; lastFitT = -Infinity; }
        else if (willRaise || t - lastFitT >= refitEvery) {
          lastFitT = t;
          forecast = null;
          creep = undefined;
          const onset = (alert.active ? alert.raisedAt : t) - Math.max(horizon, t - ts[i0]) / 2;
          let j0 = head;
          while (j0 < ts.length && ts[j0] < Math.max(onset, t - fitHorizon)) j0++;
          if (ts.length - j0 >= 20 && t - ts[j0] >= 0.5 * horizon) {
            const fit = fitLogCreep(ts.slice(j0), ys.slice(j0), ss.slice(j0));
            if (fit && Math.sign(fit.a_rad) === Math.sign(rate)) {
              forecast = forecastSettle(fit, thr);
              // overlapping windows share noise: the fit's σ understates like the trend's does
              forecast.sigma_s *= Math.sqrt(overlap);
              creep = { a_rad: fit.a_rad, a_sigma_rad: fit.a_sigma_rad, t_c_s: fit.t_c_s, t0_s: fit.t0_s, settle_t_s: forecast.t_s, settle_sigma_s: forecast.sigma_s, forecast_reliable: forecast.reliable };
            }
          }
        }
        const perH = (x: number) => (x * 3600).toExponential(2);
        const settleText = forecast && forecast.reliable && forecast.t_s > t
          ? `; creep fit: settled in about ${fmtHours(forecast.t_s - t)} h (±${fmtHours(forecast.sigma_s)} h)` : '';
        const inc = alert.step({
          t,
          stat: Math.abs(rate),
          statThreshold: thr,
          significant,
          value: rate,
          threshold: thr,
          message: (state) => state === 'cleared'
            ? `equilibrium drift ended: ${perH(rate)} rad/h over the last ${(tr.span / 3600).toFixed(1)} h, below ${perH(alert.clearFraction * thr)} rad/h (threshold ${perH(thr)} rad/h)`
            : `equilibrium drifting at ${rate >= 0 ? '+' : ''}${perH(rate)} ± ${perH(sigma)} rad/h over the last ${(tr.span / 3600).toFixed(1)} h (threshold ${perH(thr)} rad/h)${settleText}`,
          data: {
            unit: 'rad/s', rate_rad_per_s: rate, rate_sigma_rad_per_s: sigma, threshold_rad_per_s: thr,
            horizon_s: tr.span, windows: tr.n, t_mid_s: t, ...(creep ? { creep } : {}),
          },
        });
        if (inc) out.next(inc);
      };
      return { next: onWindow };
    });
}

/** Hours for a message: 2 significant figures, at least one decimal below 10 h. */
function fmtHours(s: number): string {
  const h = s / 3600;
  return h >= 10 ? h.toFixed(0) : h.toFixed(1);
}
