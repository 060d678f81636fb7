/**
 * The analysis side of a run: converted, run-time blocks go into the
 * pipeline; window results and watcher alerts come out into the store and to
 * the station's alert sinks. The same for record, import and demo; only a live
 * source also watches for silence (`no-data`, on host timers).
 *
 * Faults never stop a run: the pipeline restarts a failing stage itself
 * (pipelines/pipeline.ts); a watcher that throws is restarted here with its
 * state reset and leaves a `watch-error` event; anything that still escapes
 * the streams (rxjs's unhandled-error path, e.g. a throw while storing a
 * result) is logged and stored as an `internal-error` event instead of being
 * re-thrown on a timer, which would end the process.
 */
import { Subject, config, merge, type Subscription } from 'rxjs';
import type { AngleBlock } from '../domain/block.js';
import type { Incident } from '../domain/events.js';
import type { Station } from '../config/station.js';
import type Database from 'better-sqlite3';
import { analysisPipeline } from '../../pipelines/pipeline.js';
import { watchEquilibrium } from '../../pipelines/watch/watch-equilibrium.js';
import { watchPeriod } from '../../pipelines/watch/watch-period.js';
import { watchAmplitude } from '../../pipelines/watch/watch-amplitude.js';
import { watchSaturation } from '../../pipelines/watch/watch-saturation.js';
import { watchNoData } from '../../pipelines/watch/watch-no-data.js';
import { superviseWatcher } from '../../pipelines/watch/supervise-watcher.js';
import { faultMessage } from '../../pipelines/restart-on-fault.js';
import { sqliteReadStore } from '../../db/read-store.js';
import { fibreSlopePrior } from '../summaries/amplitude-dependence.js';
import { createDispatcher, type AlertDispatcher } from '../alerts/alert-dispatcher.js';
import type { BlockSink } from './acquisition.js';
import type { RunSession } from './run-session.js';
import { deriveContextFor, quantumFor, twistLimitFor } from '../config/derive-context.js';

export interface LiveSinkOptions {
  /** a live source: watch for silence on host timers (default true) */
  live?: boolean;
  /** alert delivery (default: from the station's alerts block) */
  dispatcher?: AlertDispatcher | null;
  log?: (line: string) => void;
  /** the fibre's known period–amplitude slope (src/summaries/amplitude-dependence.ts fibreSlopePrior), for the period watcher */
  amplitudePrior?: { slope_s_per_rad: number; sigma_s_per_rad: number };
}

/** Handlers of the live sinks now running, told of errors that escaped the streams. */
const escapedErrorHandlers = new Set<(err: unknown) => void>();
let escapeHandlerInstalled = false;

/**
 * Route rxjs's unhandled errors to the running sinks, once per process. rxjs
 * would otherwise re-throw them on a timer (an uncaught exception: the end of
 * `record`). With no sink running they are written to stderr.
 */
function installEscapedErrorHandler(): void {
  if (escapeHandlerInstalled) return;
  escapeHandlerInstalled = true;
  const previous = config.onUnhandledError;
  config.onUnhandledError = (err) => {
    if (escapedErrorHandlers.size === 0) {
      if (previous) previous(err);
      else process.stderr.write(`fibrewatch: internal error outside a run: ${faultMessage(err)}\n`);
      return;
    }
    for (const h of escapedErrorHandlers) h(err);
  };
}

/** Build the pipeline for a session; subscribe everything before the first block. */
export function makeLiveSink(station: Station, session: RunSession, opts: LiveSinkOptions = {}): BlockSink {
  const log = opts.log ?? ((l: string) => process.stderr.write(l + '\n'));
  /** Log a fault and store it as an event; storing may itself be what failed, so never throw from here. */
  const internalError = (stage: string, what: string, err: unknown): void => {
    const message = faultMessage(err);
    log(`internal error: ${what}: ${message}`);
    try {
      session.incident({ kind: 'internal-error', severity: 'warning', message: `${what}: ${message}; the run goes on`, data: { stage, message } });
    } catch (e) {
      log(`internal error: could not store the event: ${faultMessage(e)}`);
    }
  };
  installEscapedErrorHandler();
  const onEscaped = (err: unknown): void => internalError('escaped', 'an error escaped the pipeline stages', err);
  escapedErrorHandlers.add(onEscaped);
  const blocks$ = new Subject<AngleBlock>();
  const a = station.analysis;
  const al = station.alerts;
  const p = analysisPipeline(blocks$, {
    analysis: a,
    derive: deriveContextFor(station),
    quantum_rad: quantumFor(station),
    noise: { damping: station.pendulum.damping, temperature_K: station.environment.temperature_K },
    onIncident: (inc) => session.incident(runTimeIncident(inc)),
    onFirstEstimate: (period, factor) => log(`first period estimate ${period.toPrecision(5)} s: fitting at ${factor > 1 ? `1/${factor} of the input rate` : 'the input rate'}`),
  });
  const dispatcher = opts.dispatcher === undefined ? createDispatcher(al) : opts.dispatcher;
  const lim = twistLimitFor(station);
  const overlap = a.window_periods / a.step_periods;
  const watchers$ = merge(
    p.windows$.pipe(superviseWatcher('watch-equilibrium', () => watchEquilibrium({ threshold_rad_per_hour: al.equilibrium_rate_rad_per_hour, horizon_h: al.horizon_h, overlap }))),
    p.windows$.pipe(superviseWatcher('watch-period', () => watchPeriod({
      periodChange_ppm: al.period_change_ppm, overlap,
      amplitudeSlope_s_per_rad: opts.amplitudePrior?.slope_s_per_rad, amplitudeSlopeSigma_s_per_rad: opts.amplitudePrior?.sigma_s_per_rad,
    }))),
    p.windows$.pipe(superviseWatcher('watch-amplitude', () => watchAmplitude({ min_rad: al.amplitude_min_rad, limit_rad: lim ? al.twist_fraction * lim.theta_max_rad : undefined }))),
    p.cleaned$.pipe(superviseWatcher('watch-saturation', () => watchSaturation({}))),
    ...(opts.live === false ? [] : [blocks$.pipe(superviseWatcher('watch-no-data', () => watchNoData({ noData_s: al.no_data_s })))]),
  );
  const subs: Subscription[] = [];
  let failed: Error | undefined;
  const done = new Promise<void>((resolve) => {
    subs.push(p.windows$.subscribe({
      next: (w) => session.window(w),
      // the stages restart themselves (pipeline.ts): this is only reached when one cannot be rebuilt
      error: (e) => { failed = e as Error; internalError('pipeline', 'analysis stopped (samples are still stored)', e); resolve(); },
      complete: () => resolve(),
    }));
  });
  subs.push(watchers$.subscribe({
    next: (inc) => {
      const e = session.incident(runTimeIncident(inc));
      if (inc.state && dispatcher) {
        dispatcher.dispatch({ ...inc, run: session.runId, station: station.station, t: new Date(e.t_ms).toISOString(), t_s: e.t_s });
      }
    },
    error: (e) => internalError('watchers', 'watchers stopped', e),
  }));
  return {
    push: (b) => {
      if (!failed) blocks$.next(b);
    },
    async end() {
      blocks$.complete();
      await done;
      // rxjs reports escaped errors on a timer: let those of this run land here before letting go
      await new Promise((r) => setTimeout(r, 0));
      for (const s of subs) s.unsubscribe();
      escapedErrorHandlers.delete(onEscaped);
      await dispatcher?.close(opts.live === false ? 2000 : 5000);
    },
  };
}

/**
 * Pipeline and watcher incidents carry times on the run's time base (the
 * session rebased the blocks before the pipeline saw them), not on the
 * samples' own clock: say so, so the session does not subtract the origin again.
 */
function runTimeIncident(inc: Incident): Incident & { runTime: true } {
  return { ...inc, runTime: true };
}

/**
 * The fibre's period–amplitude slope from its earlier runs in this store, for
 * `amplitudePrior`; said on the log when there is one. Never fails a start: a
 * store that cannot answer gives none.
 */
export async function amplitudePriorFor(db: Database.Database, station: Station, log?: (line: string) => void): Promise<LiveSinkOptions['amplitudePrior']> {
  try {
    // the store is shared with the recorder: read through it, never close it here
    const p = await fibreSlopePrior(sqliteReadStore(db, 'station store'), station.fibre.name);
    if (p) log?.(`period watcher: the fibre's period–amplitude slope ${p.slope_s_per_rad.toPrecision(3)} ± ${p.sigma_s_per_rad.toPrecision(2)} s/rad, from run ${p.run}`);
    return p;
  } catch (e) {
    log?.(`period watcher: no amplitude slope from earlier runs (${faultMessage(e)})`);
    return undefined;
  }
}
