/**
 * The one place where stream errors go. Every operator and watcher in
 * pipelines/ subscribes to its source through `operate`, never by hand:
 *
 * - `operate` calls the operator's `next` for each value and `complete` when
 *   the source completes (the output completes after it returns);
 * - a throw from `next` or `complete` — or an `out.error(e)` the operator
 *   raises itself, from a timer or an inner stream — ends the output with
 *   that error exactly once; upstream is unsubscribed, `teardown` runs and
 *   nothing more is delivered; a source error ends the output the same way;
 * - `teardown` runs once, however the output ends (error, completion,
 *   unsubscribe).
 *
 * So an operator holds no try/catch of its own around its subscription.
 * What a fault then does — restart the stage, report it, keep the run going —
 * is decided one level up, by `restartOnFault` (restart-on-fault.ts), where
 * the pipeline and the live sink assemble the stages. Modelled on rxjs's own
 * internal operator subscriber, which is not public API.
 */
import { Observable, type Subscription } from 'rxjs';

/** What an operator may do with its output. */
export interface OperatorOutput<R> {
  /** hand a value downstream (ignored once the output has ended) */
  next(value: R): void;
  /** end the output with an error: once; later calls are ignored */
  error(err: unknown): void;
  /** true once the output has ended or been unsubscribed */
  readonly closed: boolean;
}

/** An operator's callbacks; `operate` calls them and routes their throws. */
export interface OperatorHandlers<T> {
  /** one source value */
  next(value: T): void;
  /** the source completed: flush what is held; the output completes afterwards */
  complete?(): void;
  /** release timers and buffers; runs once however the output ends */
  teardown?(): void;
}

/**
 * Subscribe to `source` on behalf of an operator whose state and callbacks
 * `init` creates (once per subscription, so each subscriber gets fresh state).
 *
 * @example
 * ```ts
 * const double = (source: Observable<number>) => operate<number, number>(source, (out) => ({ next: (v) => out.next(2 * v) }));
 * ```
 * @return the operator's output stream
 */
export function operate<T, R>(source: Observable<T>, init: (out: OperatorOutput<R>) => OperatorHandlers<T>): Observable<R> {
  return new Observable<R>((subscriber) => {
    let ended = false;
    let tornDown = false;
    let upstream: Subscription | undefined;
    let handlers: OperatorHandlers<T> | undefined;

    const teardown = (): void => {
      if (tornDown) return;
      tornDown = true;
      upstream?.unsubscribe();
      handlers?.teardown?.();
    };
    const fail = (err: unknown): void => {
      if (ended) return;
      ended = true;
      try {
        teardown();
      } catch {
        // the first error is the one reported; a throw while tearing down after it adds nothing
      }
      subscriber.error(err);
    };
    const out: OperatorOutput<R> = {
      next: (v) => {
        if (!ended) subscriber.next(v);
      },
      error: fail,
      get closed() {
        return ended || subscriber.closed;
      },
    };

    try {
      handlers = init(out);
    } catch (e) {
      fail(e);
      return;
    }
    const h = handlers;
    upstream = source.subscribe({
      next(v) {
        if (ended) return;
        try {
          h.next(v);
        } catch (e) {
          fail(e);
        }
      },
      error: fail,
      complete() {
        if (ended) return;
        try {
          h.complete?.();
        } catch (e) {
          fail(e);
          return;
        }
        if (ended) return;
        ended = true;
        try {
          teardown();
        } catch (e) {
          subscriber.error(e);
          return;
        }
        subscriber.complete();
      },
    });
    // a synchronous source may have ended us while subscribe() was still running
    if (ended) upstream.unsubscribe();
    return () => {
      ended = true;
      teardown();
    };
  });
}
