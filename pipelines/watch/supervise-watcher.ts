/**
 * A watcher under supervision (restart-on-fault.ts): when it throws, a fresh
 * instance with its state reset watches the rest of the stream, and a
 * `watch-error` incident naming the watcher and the message joins its
 * output, so it is stored with the run's events. Alerts go on.
 */
import type { Observable, OperatorFunction } from 'rxjs';
import type { Incident } from '../../src/domain/events.js';
import { restartOnFault } from '../restart-on-fault.js';
import { faultIncident } from '../fault-incident.js';

/** Sample time of a watcher's input, s: the middle of a window, the last sample of a block. */
function watchedTime(input: unknown): number | undefined {
  if (!input || typeof input !== 'object') return undefined;
  const v = input as { t_mid_s?: unknown; t?: unknown; n?: unknown };
  if (typeof v.t_mid_s === 'number') return v.t_mid_s;
  if (v.t instanceof Float64Array && typeof v.n === 'number' && v.n > 0) return v.t[v.n - 1];
  return undefined;
}

/**
 * @example
 * ```ts
 * windows$.pipe(superviseWatcher('watch-period', () => watchPeriod({ periodChange_ppm: 300 })));
 * ```
 * @param name the watcher's name in the watch-error event
 * @param make builds one instance of the watcher (again after each fault)
 * @return the watcher's incidents, with a watch-error after each reported fault
 */
export function superviseWatcher<T>(name: string, make: () => OperatorFunction<T, Incident>): (source: Observable<T>) => Observable<Incident> {
  return restartOnFault<T, Incident>(make, {
    stage: name,
    onFault: (f) => faultIncident(f, {
      kind: 'watch-error',
      t: watchedTime(f.input),
      consequence: 'the watcher is restarted with its state reset (an alert it had raised may be raised again) and goes on watching',
    }) ?? undefined,
  });
}
