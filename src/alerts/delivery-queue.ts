/**
 * The delivery mechanism of the queued alert sinks (webhook, command): a
 * bounded FIFO that drops the oldest item when full and counts it, one
 * delivery at a time in order, transient failures retried with the project's
 * backoff (src/domain/backoff.ts) up to a limit, permanent failures not
 * retried, and close(grace_ms) that flushes while deliveries keep finishing.
 *
 * Written here rather than taken from p-queue + p-retry: p-queue has no
 * bounded drop-oldest queue (it grows without limit, or the caller must refuse
 * new work, the opposite of what an alert sink needs), p-retry brings its own
 * backoff (not ours, no equal jitter), and neither knows "the item now in
 * flight was pushed out of the queue" or a close that restarts its grace on
 * progress. Gluing those on would be more code than this file, spread over two
 * dependencies.
 *
 * The item in flight stays at the head of the queue and counts toward its
 * capacity (a full queue pushes it out: it is then not retried, and counted as
 * dropped unless the attempt under way succeeds).
 */
import { nextDelay } from '../domain/backoff.js';

/** What one attempt came to. */
export type AttemptOutcome = { ok: true } | { ok: false; permanent: boolean; reason: string };

/** What happens to the items, for the sink's counters and messages. All optional, called synchronously. */
export interface DeliveryHooks<T> {
  /** the item was delivered */
  delivered?(item: T): void;
  /** an attempt failed transiently; `attempts` so far */
  attemptFailed?(item: T, reason: string, attempts: number): void;
  /** the item is given up: refused (permanent) or out of retries */
  failed?(item: T, reason: string, attempts: number, permanent: boolean): void;
  /** the oldest item was pushed out of a full queue; `total` dropped so far */
  dropped?(item: T, total: number): void;
  /** send() after close(): the item is not taken */
  refused?(item: T): void;
}

/** Options of DeliveryQueue. */
export interface DeliveryQueueOptions<T> {
  /** capacity, items (≥ 1), the one in flight included */
  capacity: number;
  /** retries per item after the first attempt (≥ 0) */
  retries: number;
  /** first retry delay, s (> 0) */
  minDelay_s: number;
  /** cap on the retry delay, s (≥ minDelay_s) */
  maxDelay_s: number;
  /**
   * Deliver one item. `droppedBefore` is how many items were dropped since the
   * last delivery (to be told to the receiver); `signal` aborts when close() gives up.
   * A throw counts as a transient failure.
   */
  attempt(item: T, droppedBefore: number, signal: AbortSignal): Promise<AttemptOutcome>;
  hooks?: DeliveryHooks<T>;
  /** uniform random numbers in [0, 1) for the backoff jitter (default Math.random) */
  random?: () => number;
}

/** Counters of a delivery queue. */
export interface DeliveryCounts {
  delivered: number;
  failed: number;
  dropped: number;
  /** still queued, the one in flight included */
  pending: number;
}

/** A bounded, ordered, retrying delivery queue; see the module comment. */
export class DeliveryQueue<T> {
  private readonly ring: (T | undefined)[];
  private head = 0;
  private size = 0;
  /** items ever taken off the front (delivered, failed or dropped): the in-flight item is still queued while this is unchanged */
  private removed = 0;
  private unreported = 0;
  private readonly counts = { delivered: 0, failed: 0, dropped: 0 };
  private loop: Promise<void> | null = null;
  private closing = false;
  private readonly stop = new AbortController();
  private wake: (() => void) | null = null;
  private onProgress: (() => void) | null = null;
  private readonly cap: number;
  private readonly random: () => number;
  private readonly hooks: DeliveryHooks<T>;

  constructor(private readonly opts: DeliveryQueueOptions<T>) {
    if (!(Number.isInteger(opts.capacity) && opts.capacity >= 1)) throw new RangeError(`capacity: must be an integer ≥ 1, got ${opts.capacity}`);
    if (!(opts.retries >= 0)) throw new RangeError(`retries: must be ≥ 0, got ${opts.retries}`);
    if (!(opts.minDelay_s > 0 && Number.isFinite(opts.minDelay_s))) throw new RangeError(`minDelay_s: must be a finite number > 0, got ${opts.minDelay_s}`);
    if (!(opts.maxDelay_s >= opts.minDelay_s && Number.isFinite(opts.maxDelay_s))) throw new RangeError(`maxDelay_s: must be finite and ≥ minDelay_s (${opts.minDelay_s}), got ${opts.maxDelay_s}`);
    this.cap = opts.capacity;
    this.ring = new Array(this.cap);
    this.random = opts.random ?? Math.random;
    // a throwing hook must neither break send()'s promise never to throw nor stop the delivery loop
    const h = opts.hooks ?? {};
    const safe = <A extends unknown[]>(f?: (...a: A) => void) => (f ? (...a: A) => { try { f(...a); } catch { /* ignore */ } } : undefined);
    this.hooks = { delivered: safe(h.delivered), attemptFailed: safe(h.attemptFailed), failed: safe(h.failed), dropped: safe(h.dropped), refused: safe(h.refused) };
  }

  /** Enqueue one item: O(1), never blocks, never throws; a full queue drops its oldest. */
  send(item: T): void {
    if (this.closing) {
      this.hooks.refused?.(item);
      return;
    }
    if (this.size === this.cap) {
      const old = this.ring[this.head] as T;
      this.shift();
      this.counts.dropped++;
      this.unreported++;
      this.hooks.dropped?.(old, this.counts.dropped);
    }
    this.ring[(this.head + this.size) % this.cap] = item;
    this.size++;
    if (!this.loop) this.loop = this.run().finally(() => { this.loop = null; });
  }

  /** The counters now. */
  stats(): DeliveryCounts {
    return { ...this.counts, pending: this.size };
  }

  /**
   * Stop taking items and flush. The grace bounds a queue that makes no
   * progress, not a long one that does: it restarts whenever an item is
   * finished (delivered or given up), up to 10 × grace_ms in all; then the
   * attempt in flight is aborted and what is left stays pending. A backoff
   * wait under way is cut short, so a last try happens at once.
   */
  async close(grace_ms = 5000): Promise<DeliveryCounts> {
    this.closing = true;
    const hardEnd = Date.now() + 10 * grace_ms;
    let timer: NodeJS.Timeout | undefined;
    const arm = () => {
      clearTimeout(timer);
      timer = setTimeout(() => this.abort(), Math.max(0, Math.min(hardEnd, Date.now() + grace_ms) - Date.now()));
    };
    arm();
    this.onProgress = arm;
    this.wake?.();
    try {
      while (this.loop) await this.loop;
    } finally {
      clearTimeout(timer);
      this.onProgress = null;
      this.abort();
    }
    return this.stats();
  }

  private abort(): void {
    if (this.stop.signal.aborted) return;
    this.stop.abort(new Error('closing'));
    this.wake?.();
  }

  private shift(): void {
    this.ring[this.head] = undefined;
    this.head = (this.head + 1) % this.cap;
    this.size--;
    this.removed++;
  }

  private async attemptOnce(item: T, carried: number): Promise<AttemptOutcome> {
    try {
      return await this.opts.attempt(item, carried, this.stop.signal);
    } catch (e) {
      return { ok: false, permanent: false, reason: (e as Error)?.message ?? String(e) };
    }
  }

  /** Wait ms, or less if close() wakes or aborts it. */
  private wait(ms: number): Promise<void> {
    return new Promise((resolve) => {
      const done = () => { clearTimeout(t); this.wake = null; resolve(); };
      const t = setTimeout(done, ms);
      this.wake = done;
    });
  }

  private async run(): Promise<void> {
    const stopped = this.stop.signal;
    const hooks = this.hooks;
    while (this.size > 0 && !stopped.aborted) {
      const seq = this.removed;
      const item = this.ring[this.head] as T;
      const atHead = () => this.removed === seq;
      let attempts = 0;
      for (;;) {
        const carried = this.unreported;
        const r = await this.attemptOnce(item, carried);
        attempts++;
        if (r.ok) {
          if (!atHead()) {
            // pushed out while in flight, yet it arrived: not a drop after all
            this.counts.dropped--;
            this.unreported--;
          }
          this.unreported = Math.max(0, this.unreported - carried);
          this.counts.delivered++;
          hooks.delivered?.(item);
          this.onProgress?.();
          break;
        }
        if (!atHead()) break; // pushed out while in flight: counted as dropped, not retried
        if (r.permanent) {
          this.counts.failed++;
          hooks.failed?.(item, r.reason, attempts, true);
          this.onProgress?.();
          break;
        }
        hooks.attemptFailed?.(item, r.reason, attempts);
        if (attempts > this.opts.retries) {
          this.counts.failed++;
          hooks.failed?.(item, r.reason, attempts, false);
          this.onProgress?.();
          break;
        }
        if (stopped.aborted) return; // closing gave up: the item stays pending
        await this.wait(1000 * nextDelay(attempts - 1, this.opts.minDelay_s, this.opts.maxDelay_s, this.random()));
        if (stopped.aborted) return;
        if (!atHead()) break; // pushed out while waiting
      }
      if (atHead()) this.shift();
    }
  }
}
