/**
 * The alert life cycle shared by every watcher: `raised` once when a
 * condition starts, `updated` at most every `updateEvery_s` while it
 * persists, `cleared` when it ends — with hysteresis so it does not flap: a
 * raised alert clears only after `clearAfter` consecutive evaluations with
 * the statistic below `clearFraction` × its threshold.
 */
import type { AlertState as State, EventKind, Incident, Severity } from '../../src/domain/events.js';

/** The life-cycle settings every watcher takes (its own default for updateEvery_s). */
export interface AlertTuning {
  /** least time between two `updated` incidents, s (default 900 = 15 min, or the watcher's) */
  updateEvery_s?: number;
  /** hysteresis: the statistic must fall below this fraction of its threshold to count as ok (default 0.7) */
  clearFraction?: number;
  /** consecutive ok evaluations needed to clear (default 3) */
  clearAfter?: number;
}

/** Options of createAlertState. */
export interface AlertStateOptions extends AlertTuning {
  kind: EventKind;
  severity: Severity;
  /** consecutive evaluations over threshold needed to raise (default 1) */
  raiseAfter?: number;
}

/** One evaluation of a watcher's condition. */
export interface AlertEvaluation {
  /** time, s (same base as the watcher's input) */
  t: number;
  /** decision statistic, ≥ 0; the condition holds when stat ≥ statThreshold (and `significant`) */
  stat: number;
  statThreshold: number;
  /** extra test the condition must pass to raise (e.g. significance); default true */
  significant?: boolean;
  /** what the incident reports (value and threshold in the unit named in data.unit) */
  value: number | null;
  threshold: number | null;
  /** message for the state being emitted */
  message: (state: State) => string;
  data?: Record<string, unknown>;
  /** host wall time, ms */
  host_ms?: number;
}

/** A watcher's alert state machine. */
export interface AlertStateMachine {
  /** Feed one evaluation; returns the incident to emit, or null. */
  step(ev: AlertEvaluation): Incident | null;
  /** true while raised */
  readonly active: boolean;
  /** time raised, s (NaN when not active) */
  readonly raisedAt: number;
  /** the hysteresis fraction in use (the option or its default), for the watchers' messages */
  readonly clearFraction: number;
}

/** Create the life-cycle state machine for one alert kind. */
export function createAlertState(opts: AlertStateOptions): AlertStateMachine {
  const updateEvery = opts.updateEvery_s ?? 900;
  const clearFraction = opts.clearFraction ?? 0.7;
  const clearAfter = opts.clearAfter ?? 3;
  const raiseAfter = opts.raiseAfter ?? 1;
  if (!(clearFraction > 0 && clearFraction <= 1)) throw new RangeError(`alert-state: clearFraction must be in (0, 1], got ${clearFraction}`);
  if (!(clearAfter >= 1) || !(raiseAfter >= 1)) throw new RangeError('alert-state: clearAfter and raiseAfter must be ≥ 1');
  let active = false;
  let raisedAt = NaN;
  let lastEmit = -Infinity;
  let okRun = 0;
  let badRun = 0;
  const make = (state: State, ev: AlertEvaluation): Incident => {
    lastEmit = ev.t;
    return {
      kind: opts.kind,
      severity: state === 'cleared' ? 'info' : opts.severity,
      t: ev.t,
      ...(ev.host_ms !== undefined ? { host_ms: ev.host_ms } : {}),
      message: ev.message(state),
      value: ev.value,
      threshold: ev.threshold,
      state,
      data: { ...ev.data, ...(state !== 'raised' && Number.isFinite(raisedAt) ? { raised_t: raisedAt, duration_s: ev.t - raisedAt } : {}) },
    };
  };
  return {
    get active() { return active; },
    get raisedAt() { return raisedAt; },
    clearFraction,
    step(ev) {
      const over = ev.stat >= ev.statThreshold && ev.significant !== false;
      if (!active) {
        badRun = over ? badRun + 1 : 0;
        if (badRun < raiseAfter) return null;
        active = true;
        raisedAt = ev.t;
        okRun = 0;
        badRun = 0;
        return make('raised', ev);
      }
      if (ev.stat < clearFraction * ev.statThreshold) {
        okRun++;
        if (okRun >= clearAfter) {
          const inc = make('cleared', ev);
          active = false;
          raisedAt = NaN;
          okRun = 0;
          return inc;
        }
        return null;
      }
      okRun = 0;
      if (ev.t - lastEmit >= updateEvery) return make('updated', ev);
      return null;
    },
  };
}
