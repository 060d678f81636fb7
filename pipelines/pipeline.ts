/**
 * The assembled analysis pipeline, the same for a live device, a file replay
 * and the simulator: fill holes → clean → (gap events) → condition (decimation chosen from
 * the first period estimate) → sliding windows in periods → analyse.
 *
 * Faults (restart-on-fault.ts): every stage runs under `restartOnFault`. A
 * stage that throws is replaced by a fresh one for the following blocks; the
 * restart counts as a gap (the fresh stage's first block carries
 * FLAG_AFTER_GAP, so no Hampel window, filter run or analysis window spans
 * the fault), and one `internal-error` incident naming the stage goes to
 * `onIncident`. The samples the failed stage held are stored (the session
 * wrote them before the pipeline saw them), only not analysed. A window whose
 * analysis throws is kept with status `internal-error` (analyse.ts).
 */
import { share, tap, type Observable, type OperatorFunction } from 'rxjs';
import { FLAG_AFTER_GAP, type AngleBlock } from '../src/domain/block.js';
import type { Incident } from '../src/domain/events.js';
import type { WindowResult } from '../src/domain/window-result.js';
import type { AnalysisConfig } from '../src/config/station.js';
import type { DeriveContext } from '../src/analysis/derive.js';
import { WindowNoiseModel } from '../src/analysis/phase-diffusion.js';
import type { Damping } from '../src/physics/thermal.js';
import { clean } from './clean.js';
import { fillHoles } from './fill-holes.js';
import { gapEvents } from './gap-events.js';
import { adaptiveCondition } from './adaptive-condition.js';
import { condition } from './condition.js';
import { slidingWindows } from './window.js';
import { analyse } from './analyse.js';
import { PeriodTracker } from './period-tracker.js';
import { restartOnFault, type StageFault } from './restart-on-fault.js';
import { faultIncident } from './fault-incident.js';

export interface PipelineOptions {
  analysis: AnalysisConfig;
  derive?: DeriveContext;
  /** incidents found on the way: gaps in the sample times, `internal-error` for a stage that threw */
  onIncident?: (inc: Incident) => void;
  /** the first period estimate and the decimation factor chosen */
  onFirstEstimate?: (period_s: number, factor: number) => void;
  /** encoder quantisation step, rad: floor of the despiker's robust σ */
  quantum_rad?: number;
  /** what the station says of the balance's noise: damping model and temperature (defaults internal, 295 K) */
  noise?: { damping?: Damping; temperature_K?: number };
}

export interface Pipeline {
  /** cleaned blocks at the input rate (for watchers of samples: saturation, no-data) */
  cleaned$: Observable<AngleBlock>;
  /** one result per window, in order */
  windows$: Observable<WindowResult>;
}

/** The same block with FLAG_AFTER_GAP on its first sample (flags copied: the block may be shared). */
function markGap(b: AngleBlock): AngleBlock {
  if (b.n === 0 || b.flags[0] & FLAG_AFTER_GAP) return b;
  const flags = b.flags.slice();
  flags[0] |= FLAG_AFTER_GAP;
  return { ...b, flags };
}

/** Sample time of a stage's input, s: the first sample of a block or of a window. */
function timeOf(input: unknown): number | undefined {
  if (!input || typeof input !== 'object') return undefined;
  const v = input as { t?: unknown; n?: unknown };
  if (!(v.t instanceof Float64Array)) return undefined;
  const n = typeof v.n === 'number' ? v.n : v.t.length;
  return n > 0 && Number.isFinite(v.t[0]) ? v.t[0] : undefined;
}

/** Build the pipeline over a stream of run-time blocks. */
export function analysisPipeline(blocks$: Observable<AngleBlock>, opts: PipelineOptions): Pipeline {
  const a = opts.analysis;
  const report = (inc: Incident): void => opts.onIncident?.(inc);
  const tracker = new PeriodTracker(a.period_guess_s);
  // the noise the residuals cannot show, measured on the run's windows (survives a restart of `analyse`)
  const windowNoise = new WindowNoiseModel({
    damping: opts.noise?.damping ?? 'internal',
    inertia_kg_m2: opts.derive?.inertia_kg_m2,
    temperature_K: opts.noise?.temperature_K,
  });
  // fits on low-passed, decimated samples see band-limited readout noise: its share of their standard errors is scaled up (decimate.ts, analyse.ts)
  const decimation = { factor: 1, sigmaFactor: 1 };
  // once fixed, the decimation factor outlives a restart of the conditioning (it is a choice, not state)
  let factor: number | undefined;
  let nextWindow = 0;
  // times of faults before gapEvents: the jump they leave is reported by the fault, not again as a gap
  const faultTimes: number[] = [];

  const onFault = (what: string) => (f: StageFault<unknown>): undefined => {
    const t = timeOf(f.input);
    if (t !== undefined && (f.stage === 'fill-holes' || f.stage === 'clean')) faultTimes.push(t);
    const inc = faultIncident(f, { kind: 'internal-error', t, consequence: what });
    if (inc) report(inc);
    return undefined;
  };
  const sampleStage = (stage: string, make: () => OperatorFunction<AngleBlock, AngleBlock>): OperatorFunction<AngleBlock, AngleBlock> =>
    restartOnFault(make, {
      stage,
      markRestart: markGap,
      onFault: onFault('restarted with fresh state; the analysis goes on as after a gap (the samples the stage held are stored, not analysed)'),
    });
  const isFaultRestart = (from_s: number, to_s: number): boolean => {
    const i = faultTimes.findIndex((t) => t > from_s && t <= to_s);
    if (i >= 0) faultTimes.splice(0, i + 1);
    return i >= 0;
  };

  const cleaned$ = blocks$.pipe(
    sampleStage('fill-holes', () => fillHoles()),
    sampleStage('clean', () => clean({ hampelHalfWidth: a.hampel_half_width, hampelThreshold: a.hampel_threshold, hampelMinScale_rad: opts.quantum_rad })),
    sampleStage('gap-events', () => gapEvents(report, { isFaultRestart })),
    share(),
  );
  const windows$ = cleaned$.pipe(
    sampleStage('condition', () => factor !== undefined ? condition({ factor }) : adaptiveCondition({
      samplesPerPeriod: a.samples_per_period,
      periodGuess_s: a.period_guess_s,
      firstEstimate_s: a.first_estimate_s,
      onFirstEstimate: (p, m) => {
        tracker.seed(p);
        opts.onFirstEstimate?.(p, m);
      },
      onFactor: (m, f) => {
        factor = m;
        decimation.factor = m;
        decimation.sigmaFactor = f;
      },
    })),
    restartOnFault(() => slidingWindows({ windowPeriods: a.window_periods, stepPeriods: a.step_periods, period$: () => tracker.current, firstIndex: nextWindow }), {
      stage: 'windows',
      onFault: onFault('restarted with fresh state; the next window starts after the fault (the samples it held are stored, not analysed)'),
    }),
    tap((w) => {
      nextWindow = w.index + 1;
    }),
    restartOnFault(() => analyse({ derive: opts.derive, tracker, decimationNow: () => decimation, onIncident: report, noise: windowNoise }), {
      stage: 'analyse',
      onFault: onFault('restarted; the window it was working on is lost, the next ones are analysed'),
    }),
    share(),
  );
  return { cleaned$, windows$ };
}
