/**
 * The assembled analysis pipeline, the same for a live device, a file replay
 * and the simulator: fill holes → clean → (gap events) → condition (decimation chosen from
 * the first period estimate) → sliding windows in periods → analyse.
 */
import { Observable, share } from 'rxjs';
import type { AngleBlock } from '../src/domain/block.js';
import type { Incident } from '../src/domain/events.js';
import type { WindowResult } from '../src/domain/window-result.js';
import type { AnalysisConfig } from '../src/config/station.js';
import type { DeriveContext } from '../src/analysis/derive.js';
import { clean } from './clean.js';
import { fillHoles } from './fill-holes.js';
import { gapEvents } from './gap-events.js';
import { adaptiveCondition } from './adaptive-condition.js';
import { slidingWindows } from './window.js';
import { analyse } from './analyse.js';
import { PeriodTracker } from './period-tracker.js';

export interface PipelineOptions {
  analysis: AnalysisConfig;
  derive?: DeriveContext;
  /** incidents found on the way (gaps in the sample times) */
  onIncident?: (inc: Incident) => void;
  /** the first period estimate and the decimation factor chosen */
  onFirstEstimate?: (period_s: number, factor: number) => void;
  /** encoder quantisation step, rad: floor of the despiker's robust σ */
  quantum_rad?: number;
}

export interface Pipeline {
  /** cleaned blocks at the input rate (for watchers of samples: saturation, no-data) */
  cleaned$: Observable<AngleBlock>;
  /** one result per window, in order */
  windows$: Observable<WindowResult>;
}

/** Build the pipeline over a stream of run-time blocks. */
export function analysisPipeline(blocks$: Observable<AngleBlock>, opts: PipelineOptions): Pipeline {
  const a = opts.analysis;
  const tracker = new PeriodTracker(a.period_guess_s);
  // fits on low-passed, decimated samples see band-limited noise: their standard errors are scaled up (see decimate.ts)
  const noise = { sigmaFactor: 1 };
  const cleaned$ = blocks$.pipe(
    fillHoles(),
    clean({ hampelHalfWidth: a.hampel_half_width, hampelThreshold: a.hampel_threshold, hampelMinScale_rad: opts.quantum_rad }),
    gapEvents((inc) => opts.onIncident?.(inc)),
    share(),
  );
  const windows$ = cleaned$.pipe(
    adaptiveCondition({
      samplesPerPeriod: a.samples_per_period,
      periodGuess_s: a.period_guess_s,
      firstEstimate_s: a.first_estimate_s,
      onFirstEstimate: (p, m) => {
        tracker.seed(p);
        opts.onFirstEstimate?.(p, m);
      },
      onFactor: (_m, f) => {
        noise.sigmaFactor = f;
      },
    }),
    slidingWindows({ windowPeriods: a.window_periods, stepPeriods: a.step_periods, period$: () => tracker.current }),
    analyse({ derive: opts.derive, tracker, sigmaScaleNow: () => noise.sigmaFactor }),
    share(),
  );
  return { cleaned$, windows$ };
}
