/**
 * `analyse`: each window → FFT seed (warm-started from the running period) →
 * damped-sine fit → derived quantities → a WindowResult. A window that throws
 * is stored with the error as its status; the stream never ends on one window.
 */
import { Observable } from 'rxjs';
import type { WindowResult } from '../src/domain/window-result.js';
import { analyseWindow, emptyResult, type WindowAnalysisOptions } from '../src/analysis/window-analysis.js';
import type { WindowData } from './types.js';
import type { PeriodTracker } from './period-tracker.js';

export interface AnalyseOptions extends WindowAnalysisOptions {
  /** updated with every accepted period */
  tracker?: PeriodTracker;
  /** current standard-error scale (decimation); read per window because it is fixed only after the first estimate */
  sigmaScaleNow?: () => number;
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
    new Observable<WindowResult>((subscriber) =>
      source.subscribe({
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
            r = emptyResult(w, `error: ${(e as Error).message}`.slice(0, 200), w.y.length);
          }
          subscriber.next(r);
        },
        error: (e) => subscriber.error(e),
        complete: () => subscriber.complete(),
      }),
    );
}
