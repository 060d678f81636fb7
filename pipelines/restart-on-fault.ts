/**
 * What a fault does: the policy the pipeline (pipeline.ts) and the live sink
 * (src/app/live-sink.ts) put around every stage and watcher, so that one
 * throw never stops acquisition, storage or the alerts.
 *
 * A stage's output erroring (its own throw, routed by `operate`) drops that
 * instance with all its state and the input it was working on; a fresh
 * instance from `make()` takes the rest of the stream. `onFault` hears of
 * each fault once (and may return a value to emit, e.g. a watcher's
 * `watch-error` incident); `markRestart` may mark the fresh instance's first
 * output (a gap mark on sample blocks, so nothing downstream joins data
 * across the fault). A fault while flushing at the end reports and completes.
 * A source error is not a fault of this stage: it passes straight on.
 */
import { Subject, type OperatorFunction, type Subscription } from 'rxjs';
import { operate } from './operate.js';

/** One fault of a stage. */
export interface StageFault<T> {
  /** the stage's name as given */
  stage: string;
  error: unknown;
  /** the error's message, at most 200 characters */
  message: string;
  /** the input being processed when it threw; undefined when it threw while flushing or on a timer */
  input: T | undefined;
  /** faults of this stage so far, this one included */
  faults: number;
}

/** Options of restartOnFault. */
export interface RestartOnFaultOptions<T, R> {
  /** name of the stage in the fault report */
  stage: string;
  /** called once per fault, after the fresh instance is in place; a value returned is emitted downstream */
  onFault: (fault: StageFault<T>) => R | undefined | void;
  /** applied to the first output of each fresh instance */
  markRestart?: (first: R) => R;
}

/** A short, single-line message of any thrown value. */
export function faultMessage(err: unknown): string {
  const m = err instanceof Error ? err.message || err.name : String(err);
  return m.replace(/\s+/g, ' ').slice(0, 200);
}

/**
 * Run the stage `make()` builds, replacing it by a fresh one whenever it
 * fails.
 *
 * @example
 * ```ts
 * blocks$.pipe(restartOnFault(() => clean(opts), { stage: 'clean', onFault: (f) => console.warn(f.message) }));
 * ```
 * @param make builds one instance of the stage (called again after each fault)
 * @return an operator that never errors because of the stage
 */
export function restartOnFault<T, R>(make: () => OperatorFunction<T, R>, opts: RestartOnFaultOptions<T, R>): OperatorFunction<T, R> {
  return (source) =>
    operate<T, R>(source, (out) => {
      let input: Subject<T>;
      let inner: Subscription | undefined;
      let current: T | undefined;
      let sourceDone = false;
      let marking = false;
      let faults = 0;

      const start = (): void => {
        const fresh = new Subject<T>();
        input = fresh;
        inner = fresh.pipe(make()).subscribe({
          next: (r) => {
            if (marking && opts.markRestart) {
              marking = false;
              r = opts.markRestart(r);
            }
            out.next(r);
          },
          error: (e) => {
            if (fresh === input) fault(e);
          },
        });
      };

      const fault = (err: unknown): void => {
        faults++;
        const f: StageFault<T> = { stage: opts.stage, error: err, message: faultMessage(err), input: current, faults };
        if (!sourceDone) {
          try {
            start();
          } catch (e) {
            // the stage cannot be built again (make() threw): nothing to restart
            out.error(e);
            return;
          }
          marking = true;
        }
        const extra = opts.onFault(f);
        if (extra !== undefined) out.next(extra as R);
      };

      start();
      return {
        next(v) {
          current = v;
          try {
            input.next(v);
          } finally {
            current = undefined;
          }
        },
        complete() {
          sourceDone = true;
          input.complete();
        },
        teardown() {
          inner?.unsubscribe();
        },
      };
    });
}
