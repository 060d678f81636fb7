/**
 * `analyse`: each window → FFT seed (warm-started from the running period) →
 * damped-sine fit → derived quantities → a WindowResult. A window whose
 * analysis throws is still emitted, unfitted, with status `internal-error`
 * (FIT_STATUS.internalError); the message goes into an `internal-error`
 * incident for that window; the stream never ends on one window.
 */
import type { Observable } from 'rxjs';
import type { Incident } from '../src/domain/events.js';
import type { WindowResult } from '../src/domain/window-result.js';
import { FIT_STATUS } from '../src/analysis/fit-status.js';
import { analyseWindow, emptyResult, type WindowAnalysisOptions } from '../src/analysis/window-analysis.js';
import type { WindowData } from './types.js';
import type { PeriodTracker } from './period-tracker.js';
import { operate } from './operate.js';
import { faultMessage } from './restart-on-fault.js';
import { faultIncident } from './fault-incident.js';

export interface AnalyseOptions extends WindowAnalysisOptions {
  /** updated with every accepted period */
  tracker?: PeriodTracker;
  /** current standard-error scale (decimation); read per window because it is fixed only after the first estimate */
  sigmaScaleNow?: () => number;
  /** hears of a window whose analysis threw (an `internal-error` incident naming the window and the message) */
  onIncident?: (inc: Incident) => void;
}

/**
 * @example
 * ```ts
 * windows$.pipe(analyse({ derive: { inertia_kg_m2: 3.6e-5 } })).subscribe((r) => console.log(r.status, r.period_s));
 * ```
 * @param opts derive context (inertia, fibre), period tracker
 * @return an operator from WindowData to WindowResult
 */
export function analyse(opts: AnalyseOptions = {}): (source: Observable<WindowData>) => Observable<WindowResult> {
  return (source) =>
    operate<WindowData, WindowResult>(source, (out) => {
      let faults = 0;
      return {
        next(w) {
          let r: WindowResult;
          try {
            // the window marks usable samples with 1; the fit excludes nonzero mask entries
            const exclude = new Uint8Array(w.mask.length);
            const seedExclude = new Uint8Array(w.mask.length);
            for (let i = 0; i < exclude.length; i++) {
              exclude[i] = w.mask[i] ? 0 : 1;
              seedExclude[i] = Number.isFinite(w.y[i]) ? 0 : 1;
            }
            r = analyseWindow({ index: w.index, t: w.t, y: w.y, mask: exclude, seedMask: seedExclude, temp: w.temp, t_start_s: w.t_start_s, t_end_s: w.t_end_s, periodHint_s: w.periodHint_s }, { ...opts, sigmaScale: opts.sigmaScaleNow?.() }).result;
            if (r.status === 'ok' && r.period_s !== null) opts.tracker?.update(r.period_s);
          } catch (e) {
            // a program fault, not a property of the data: keep the window, unfitted, and say why once
            r = emptyResult(w, FIT_STATUS.internalError, w.y.length);
            const inc = faultIncident({ stage: 'analyse', message: faultMessage(e), faults: ++faults }, {
              kind: 'internal-error', t: r.t_mid_s,
              consequence: `window ${w.index} is stored unfitted (status ${FIT_STATUS.internalError}), the analysis goes on`,
              data: { window: w.index },
            });
            if (inc) opts.onIncident?.(inc);
          }
          out.next(r);
        },
      };
    });
}
