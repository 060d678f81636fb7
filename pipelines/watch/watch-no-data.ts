/**
 * no-data: raised when no block has arrived for `no_data_s`, checked on a
 * timer so it fires while the source is silent (within no_data_s + check_s
 * of the last block); `updated` while the silence lasts; cleared by the next
 * block. The clock and scheduler are passed in, so tests run on a
 * TestScheduler or on real timers alike.
 */
import { asyncScheduler, type Observable, type SchedulerLike } from 'rxjs';
import type { AngleBlock } from '../../src/domain/block.js';
import type { Incident } from '../../src/domain/events.js';
import { createAlertState, type AlertTuning } from './alert-state.js';
import { operate } from '../operate.js';

/** Options of watchNoData (`updateEvery_s` default 600 s; cleared by the first block back). */
export interface WatchNoDataOptions extends Pick<AlertTuning, 'updateEvery_s'> {
  /** silence that raises the alert, s (station alerts.no_data_s) */
  noData_s: number;
  /** clock, ms (default scheduler.now()) */
  now?: () => number;
  /** scheduler of the check timer (default asyncScheduler) */
  scheduler?: SchedulerLike;
  /** interval of the check, s (default min(1, no_data_s/4)) */
  check_s?: number;
  /** host wall clock for Incident.host_ms, ms (default Date.now) */
  wall_ms?: () => number;
}

/** Watch a block stream for silence; emits no-data incidents (t undefined = host time). */
export function watchNoData(opts: WatchNoDataOptions) {
  const limit = opts.noData_s;
  if (!(limit > 0)) throw new RangeError(`watchNoData: noData_s must be > 0, got ${limit}`);
  const scheduler = opts.scheduler ?? asyncScheduler;
  const now = opts.now ?? (() => scheduler.now());
  const check_ms = (opts.check_s ?? Math.min(1, limit / 4)) * 1000;
  const wall_ms = opts.wall_ms ?? Date.now;
  return (source: Observable<AngleBlock>) =>
    operate<AngleBlock, Incident>(source, (out) => {
      // clear on the first block after the silence: no hysteresis beyond that
      const alert = createAlertState({ kind: 'no-data', severity: 'alarm', updateEvery_s: opts.updateEvery_s ?? 600, clearFraction: 1, clearAfter: 1 });
      let last = now();
      let lastSampleT: number | null = null;
      // stat: the silence now; shown: the silence the message reports (the whole gap when data is back)
      const evaluate = (silent_ms: number, shown_ms = silent_ms): void => {
        const silent = shown_ms / 1000;
        const inc = alert.step({
          t: now() / 1000,
          stat: silent_ms / 1000,
          statThreshold: limit,
          value: silent,
          threshold: limit,
          host_ms: wall_ms(),
          message: (st) => st === 'cleared'
            ? `data back after ${silent.toFixed(1)} s without a block`
            : `no data for ${silent.toFixed(1)} s (limit ${limit} s)`,
          data: { unit: 's', silent_s: silent, last_sample_t: lastSampleT },
        });
        if (inc) {
          // the recorder puts host-time incidents at "now": keep t undefined (Incident contract)
          delete inc.t;
          out.next(inc);
        }
      };
      const timer = scheduler.schedule(function tick() {
        // a timer callback is not one of operate's handlers: its throw goes to the same error channel by hand
        try {
          evaluate(now() - last);
        } catch (e) {
          out.error(e);
          return;
        }
        this.schedule(undefined, check_ms);
      }, check_ms);
      return {
        next(b) {
          const gap = now() - last;
          last = now();
          if (b.n > 0) lastSampleT = b.t[b.n - 1];
          if (alert.active) evaluate(0, gap);
        },
        teardown: () => timer.unsubscribe(),
      };
    });
}
