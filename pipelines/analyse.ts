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
import type { WindowNoiseModel } from '../src/analysis/phase-diffusion.js';
import { periodSeed } from '../src/analysis/period-seed.js';
import type { WindowData } from './types.js';
import type { PeriodTracker } from './period-tracker.js';
import { operate } from './operate.js';
import { faultMessage } from './restart-on-fault.js';
import { faultIncident } from './fault-incident.js';

export interface AnalyseOptions extends WindowAnalysisOptions {
  /** updated with every accepted period */
  tracker?: PeriodTracker;
  /**
   * the decimation in force: factor M and the standard-error scale of band-limited readout noise
   * (Decimator.whiteNoiseSigmaFactor); read per window because it is fixed only after the first estimate
   */
  decimationNow?: () => { factor: number; sigmaFactor: number };
  /** hears of a window whose analysis threw (an `internal-error` incident naming the window and the message) */
  onIncident?: (inc: Incident) => void;
  /** the run's model of the noise the residuals cannot show; lives outside the operator so a restart keeps it */
  noise?: WindowNoiseModel;
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
            const noise = opts.noise;
            const a = analyseWindow(
              { index: w.index, t: w.t, y: w.y, mask: exclude, seedMask: seedExclude, temp: w.temp, t_start_s: w.t_start_s, t_end_s: w.t_end_s, periodHint_s: w.periodHint_s },
              { ...opts, readout: readoutOf(w, opts.decimationNow?.()), extraVariance: noise && ((x) => noise.extra(x)) },
            );
            r = a.result;
            // a run of failures: look for the period afresh in this window, over its whole band, not near the estimate
            if (r.status !== 'ok' && opts.tracker?.failed()) {
              const span = w.t_end_s - w.t_start_s;
              const s = periodSeed(w.t, w.y, { mask: seedExclude, maxPeriod_s: span / 3 });
              // nothing in a window cut too short for the swing: try windows twice as long
              if (s.ok) opts.tracker.reseed(s.period_s);
              else if (opts.tracker.current !== undefined && opts.tracker.current < 1e5) opts.tracker.reseed(2 * opts.tracker.current);
            }
            if (r.status === 'ok' && r.period_s !== null) {
              opts.tracker?.update(r.period_s);
              if (noise && a.fitOnly && a.fit) {
                noise.observe({
                  t_mid_s: r.t_mid_s, span_s: r.t_end_s - r.t_start_s, period_s: r.period_s, period_fit_sigma_s: a.fitOnly.period_sigma_s,
                  decay_rate_per_s: a.fit.decay_rate_per_s!, decay_rate_fit_sigma_per_s: a.fitOnly.decay_rate_sigma_per_s, amplitude_rad: r.amplitude_rad!,
                });
              }
            }
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

/**
 * The readout noise that reached a decimated window's samples: the variance
 * measured before the filter (condition.ts) times Σh² = 1/(M·k²), and k² for
 * its share of the fit's variance. Undefined at the input rate (the fit
 * measures it on its residuals); without a measurement the whole residual
 * variance is taken as readout, the cautious choice.
 */
function readoutOf(w: WindowData, dec: { factor: number; sigmaFactor: number } | undefined): { variance_rad2: number; scale2: number } | undefined {
  if (!dec || dec.factor <= 1) return undefined;
  const k2 = dec.sigmaFactor * dec.sigmaFactor;
  let s = 0, n = 0;
  if (w.readoutVar) for (let i = 0; i < w.readoutVar.length; i++) if (Number.isFinite(w.readoutVar[i])) { s += w.readoutVar[i]; n++; }
  return { variance_rad2: n ? s / n / (dec.factor * k2) : Infinity, scale2: k2 };
}
