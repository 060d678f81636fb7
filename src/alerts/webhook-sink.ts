/**
 * Alert sink POSTing each alert as JSON to a URL. Acquisition never waits on
 * it: send() appends to a bounded in-memory queue (O(1); when full the oldest
 * alert is dropped and counted), and one delivery loop sends them strictly in
 * order, one at a time, each attempt with a timeout, failures retried with the
 * project's capped exponential backoff with jitter (the queue and its loop are
 * src/alerts/delivery-queue.ts, the delays src/domain/backoff.ts). A receiver
 * that is down for a while gets every queued alert, in order, once it is back. 4xx answers other than 408/429 are
 * permanent: that alert is given up and reported. Delivery is at least once:
 * an answer lost on the way back means the alert is sent again. After drops,
 * the next body delivered carries `dropped_before` (how many were lost).
 */
import type { AlertRecord } from './alert-record.js';
import { DeliveryQueue, type AttemptOutcome } from './delivery-queue.js';
import type { AlertSink } from './stderr-sink.js';

/** The station's alerts.webhook block. */
export interface WebhookConfig {
  url: string;
  /** per-attempt timeout, s */
  timeout_s: number;
  /** retries per alert after the first attempt */
  retries: number;
  /** backoff cap, s */
  max_delay_s: number;
  /** queue capacity, alerts */
  queue_max: number;
}

/** Counters of a webhook sink. */
export interface WebhookStats {
  delivered: number;
  /** given up after the retries or refused permanently */
  failed: number;
  /** dropped from a full queue */
  dropped: number;
  /** still queued */
  pending: number;
}

/** Options of createWebhookSink. */
export interface WebhookSinkOptions {
  /** first backoff delay, s (default 0.5, at most max_delay_s); the delay doubles per failed attempt up to max_delay_s, half of it random */
  minDelay_s?: number;
  /** uniform random numbers in [0, 1) for the backoff jitter (default Math.random) */
  random?: () => number;
  /** delivery problems, one line each (default: nothing) */
  onError?: (message: string) => void;
  /** fetch implementation (default globalThis.fetch) */
  fetch?: typeof fetch;
}

/** A webhook sink with its counters. */
export interface WebhookSink extends AlertSink {
  stats(): WebhookStats;
  /** stop taking alerts and flush; gives up once grace_ms (default 5000) pass without an alert finished (delivered or given up), or after 10 × grace_ms; resolves with the final counters */
  close(grace_ms?: number): Promise<WebhookStats>;
}

/** Create a webhook sink for the station's alerts.webhook. */
export function createWebhookSink(cfg: WebhookConfig, opts: WebhookSinkOptions = {}): WebhookSink {
  for (const k of ['timeout_s', 'max_delay_s', 'queue_max'] as const) {
    if (!(cfg[k] > 0)) throw new RangeError(`alerts.webhook.${k}: must be > 0, got ${cfg[k]}`);
  }
  if (!(cfg.retries >= 0)) throw new RangeError(`alerts.webhook.retries: must be ≥ 0, got ${cfg.retries}`);
  if (!(cfg.queue_max >= 1)) throw new RangeError(`alerts.webhook.queue_max: must be ≥ 1, got ${cfg.queue_max}`);
  try { new URL(cfg.url); } catch { throw new RangeError(`alerts.webhook.url: not a URL: ${cfg.url}`); }
  const minDelay_s = opts.minDelay_s ?? 0.5;
  if (!(minDelay_s > 0)) throw new RangeError(`minDelay_s: must be > 0, got ${minDelay_s}`);
  const doFetch = opts.fetch ?? globalThis.fetch;
  const report = opts.onError ?? (() => {});
  const what = (a: AlertRecord) => `${a.kind} ${a.state ?? ''} at ${a.t}`;
  let down = false;

  const attempt = async (item: AlertRecord, droppedBefore: number, stop: AbortSignal): Promise<AttemptOutcome> => {
    const body = JSON.stringify(droppedBefore > 0 ? { ...item, dropped_before: droppedBefore } : item);
    const ac = new AbortController();
    const onStop = () => ac.abort(stop.reason);
    stop.addEventListener('abort', onStop, { once: true });
    const timer = setTimeout(() => ac.abort(new Error(`timed out after ${cfg.timeout_s} s`)), cfg.timeout_s * 1000);
    try {
      const res = await doFetch(cfg.url, { method: 'POST', headers: { 'content-type': 'application/json' }, body, signal: ac.signal });
      await res.arrayBuffer().catch(() => undefined);
      if (res.ok) return { ok: true };
      const permanent = res.status >= 400 && res.status < 500 && res.status !== 408 && res.status !== 429;
      return { ok: false, permanent, reason: `HTTP ${res.status}` };
    } catch (e) {
      if (ac.signal.aborted) return { ok: false, permanent: false, reason: String((ac.signal.reason as Error)?.message ?? 'aborted') };
      const err = e as Error & { cause?: { code?: string; message?: string } };
      const c = err.cause;
      return { ok: false, permanent: false, reason: c?.code && c.message ? `${c.code} (${c.message})` : (c?.code ?? c?.message ?? err.message) };
    } finally {
      clearTimeout(timer);
      stop.removeEventListener('abort', onStop);
    }
  };

  const queue = new DeliveryQueue<AlertRecord>({
    capacity: Math.floor(cfg.queue_max),
    retries: cfg.retries,
    minDelay_s: Math.min(minDelay_s, cfg.max_delay_s),
    maxDelay_s: cfg.max_delay_s,
    random: opts.random,
    attempt,
    hooks: {
      delivered() {
        if (down) report(`webhook ${cfg.url}: delivering again`);
        down = false;
      },
      attemptFailed(_a, reason) {
        if (!down) report(`webhook ${cfg.url}: ${reason}; retrying with backoff (queue ${queue.stats().pending})`);
        down = true;
      },
      failed(a, reason, attempts, permanent) {
        if (permanent) report(`webhook ${cfg.url}: refused ${what(a)} (${reason}), not retried`);
        else report(`webhook ${cfg.url}: gave up ${what(a)} after ${attempts} attempts (${reason})`);
      },
      dropped(_a, total) {
        if (total === 1 || total % 1000 === 0) report(`webhook ${cfg.url}: queue full (${Math.floor(cfg.queue_max)}), dropped ${total} oldest alert(s) so far`);
      },
      refused(a) {
        report(`webhook ${cfg.url}: closed, ${what(a)} not sent`);
      },
    },
  });

  return {
    send: (a) => queue.send(a),
    stats: () => queue.stats(),
    async close(grace_ms = 5000) {
      const st = await queue.close(grace_ms);
      if (st.pending > 0) report(`webhook ${cfg.url}: closing with ${st.pending} alert(s) undelivered`);
      return st;
    },
  };
}
