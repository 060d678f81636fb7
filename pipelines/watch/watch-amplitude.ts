/**
 * amplitude-low (the swing is too small to fit reliably) and amplitude-limit
 * (the swing approaches the fibre's elastic twist limit, passed in as
 * limit_rad, e.g. alerts.twist_fraction × θ_max from src/physics).
 */
import type { Observable } from 'rxjs';
import type { Incident } from '../../src/domain/events.js';
import type { WindowResult } from '../../src/domain/window-result.js';
import { createAlertState, type AlertTuning } from './alert-state.js';
import { operate } from '../operate.js';

/** Caution shown with amplitude-limit (docs/physics.md, "Cautions"). */
export const TWIST_CAUTION =
  'Caution: a twist beyond the elastic limit can permanently set or break the fibre; a break drops the suspended mass. ' +
  "Stay within the fibre's rated load and use a catcher. Guidance only: local codes and licensed practice govern.";

/** Options of watchAmplitude (`updateEvery_s` default 1800 s; the clear levels are fixed: 1.25 × the floor, 0.9 × the limit). */
export interface WatchAmplitudeOptions extends Pick<AlertTuning, 'updateEvery_s' | 'clearAfter'> {
  /** below this amplitude the fit is unreliable, rad (absent: no amplitude-low) */
  min_rad?: number;
  /** raise amplitude-limit at or above this amplitude, rad (absent: no amplitude-limit) */
  limit_rad?: number;
  /** caution appended to amplitude-limit messages (default TWIST_CAUTION) */
  cautionText?: string;
}

/** Watch window amplitudes against a floor and the twist limit; emits amplitude-low / amplitude-limit incidents. */
export function watchAmplitude(opts: WatchAmplitudeOptions) {
  const { min_rad: min, limit_rad: limit } = opts;
  const caution = opts.cautionText ?? TWIST_CAUTION;
  if (min !== undefined && !(min > 0)) throw new RangeError(`watchAmplitude: min_rad must be > 0, got ${min}`);
  if (limit !== undefined && !(limit > 0)) throw new RangeError(`watchAmplitude: limit_rad must be > 0, got ${limit}`);
  return (source: Observable<WindowResult>) =>
    operate<WindowResult, Incident>(source, (out) => {
      const common = { updateEvery_s: opts.updateEvery_s ?? 1800, clearAfter: opts.clearAfter ?? 3 };
      // amplitude-low clears above 1/0.8 = 1.25 × min; amplitude-limit below 0.9 × limit
      const low = createAlertState({ kind: 'amplitude-low', severity: 'warning', clearFraction: 0.8, ...common });
      const high = createAlertState({ kind: 'amplitude-limit', severity: 'alarm', clearFraction: 0.9, ...common });
      const clearLow = min === undefined ? NaN : min / low.clearFraction;
      const clearHigh = limit === undefined ? NaN : limit * high.clearFraction;
      const onWindow = (w: WindowResult): void => {
        // a rejected fit's amplitude is not to be trusted (it could cry amplitude-limit on garbage)
        if (w.status !== 'ok' || w.amplitude_rad === null || !Number.isFinite(w.amplitude_rad)) return;
        const a = Math.abs(w.amplitude_rad);
        const t = w.t_mid_s;
        const data = { unit: 'rad', amplitude_rad: a, t_mid_s: t };
        if (min !== undefined) {
          const inc = low.step({
            t, stat: a > 0 ? min / a : Infinity, statThreshold: 1, value: a, threshold: min, data,
            message: (st) => st === 'cleared'
              ? `amplitude back to ${a.toExponential(2)} rad, above ${clearLow.toExponential(2)} rad (floor ${min.toExponential(2)} rad)`
              : `amplitude ${a.toExponential(2)} rad is below ${min.toExponential(2)} rad: too small to fit reliably`,
          });
          if (inc) out.next(inc);
        }
        if (limit !== undefined) {
          const inc = high.step({
            t, stat: a / limit, statThreshold: 1, value: a, threshold: limit, data,
            message: (st) => st === 'cleared'
              ? `amplitude down to ${a.toExponential(2)} rad, below ${clearHigh.toExponential(2)} rad (${(100 * high.clearFraction).toFixed(0)} % of the limit ${limit.toExponential(2)} rad)`
              : `amplitude ${a.toExponential(2)} rad is at ${((100 * a) / limit).toFixed(0)} % of the limit ${limit.toExponential(2)} rad. ${caution}`,
          });
          if (inc) out.next(inc);
        }
      };
      return { next: onWindow };
    });
}
