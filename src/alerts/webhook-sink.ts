/**
 * Alert sink POSTing each alert as JSON to a URL. Acquisition never waits on
 * it: send() appends to a bounded in-memory ring (O(1); when full the oldest
 * alert is dropped and counted), and one delivery loop sends them strictly in
 * order, one at a time, each attempt with a timeout, failures retried with a
 * capped exponential backoff. A receiver that is down for a while gets every
 * queued alert, in order, once it is back. 4xx answers other than 408/429 are
 * permanent: that alert is given up and reported. Delivery is at least once:
 * an answer lost on the way back means the alert is sent again. After drops,
 * the next body delivered carries `dropped_before` (how many were lost).
 */
import type { AlertRecord } from './alert-record.js';
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
  /** first backoff delay, s (default 0.5); doubles per failed attempt up to max_delay_s */
  minDelay_s?: number;
  /** delivery problems, one line each (default: nothing) */
  onError?: (message: string) => void;
  /** fetch implementation (default globalThis.fetch) */
  fetch?: typeof fetch;
}

/** A webhook sink with its counters. */
export interface WebhookSink extends AlertSink {
  stats(): WebhookStats;
  /** stop taking alerts and flush; gives up once grace_ms (default 5000) pass without a delivery, or after 10 × grace_ms; resolves with the final counters */
  close(grace_ms?: number): Promise<WebhookStats>;
}

/** Create a webhook sink for the station's alerts.webhook. */
export function createWebhookSink(cfg: WebhookConfig, opts: WebhookSinkOptions = {}): WebhookSink {
  for (const k of ['timeout_s', 'max_delay_s', 'queue_max'] as const) {
    if (!(cfg[k] > 0)) throw new RangeError(`alerts.webhook.${k}: must be > 0, got ${cfg[k]}`);
  }
  if (!(cfg.retries >= 0)) throw new RangeError(`alerts.webhook.retries: must be ≥ 0, got ${cfg.retries}`);
  try { new URL(cfg.url); } catch { throw new RangeError(`alerts.webhook.url: not a URL: ${cfg.url}`); }
  const doFetch = opts.fetch ?? globalThis.fetch;
  const minDelay = (opts.minDelay_s ?? 0.5) * 1000;
  const maxDelay = cfg.max_delay_s * 1000;
  const report = opts.onError ?? (() => {});
  const cap = Math.floor(cfg.queue_max);
  const ring: (AlertRecord | undefined)[] = new Array(cap);
  let head = 0;
  let size = 0;
  let droppedUnreported = 0;
  const st = { delivered: 0, failed: 0, dropped: 0 };
  let running = false;
  let closing = false;
  let stopped = false;
  let deadline = Infinity;
  let down = false;
  let inflight: AbortController | null = null;
  let wake: (() => void) | null = null;
  let loop: Promise<void> = Promise.resolve();
  let onDelivered: (() => void) | null = null;

  const sleep = (ms: number) => new Promise<void>((resolve) => {
    const t = setTimeout(done, Math.max(0, Math.min(ms, deadline - Date.now())));
    function done() { clearTimeout(t); wake = null; resolve(); }
    wake = done;
  });

  const attempt = async (body: string): Promise<'ok' | 'permanent' | string> => {
    const ac = new AbortController();
    inflight = ac;
    const timer = setTimeout(() => ac.abort(new Error(`timed out after ${cfg.timeout_s} s`)), cfg.timeout_s * 1000);
    try {
      const res = await doFetch(cfg.url, { method: 'POST', headers: { 'content-type': 'application/json' }, body, signal: ac.signal });
      await res.arrayBuffer().catch(() => undefined);
      if (res.ok) return 'ok';
      if (res.status >= 400 && res.status < 500 && res.status !== 408 && res.status !== 429) return 'permanent';
      return `HTTP ${res.status}`;
    } catch (e) {
      const err = e as Error & { cause?: { code?: string; message?: string } };
      if (ac.signal.aborted) return String((ac.signal.reason as Error)?.message ?? 'aborted');
      const c = err.cause;
      return c?.code && c.message ? `${c.code} (${c.message})` : (c?.code ?? c?.message ?? err.message);
    } finally {
      clearTimeout(timer);
      inflight = null;
    }
  };

  const run = async () => {
    running = true;
    try {
      while (size > 0 && !stopped) {
        const item = ring[head]!;
        const body = JSON.stringify(droppedUnreported > 0 ? { ...item, dropped_before: droppedUnreported } : item);
        let tries = 0;
        for (;;) {
          const r = await attempt(body);
          if (r === 'ok') {
            if (down) report(`webhook ${cfg.url}: delivering again`);
            down = false;
            st.delivered++;
            droppedUnreported = 0;
            onDelivered?.();
            break;
          }
          if (r === 'permanent') {
            report(`webhook ${cfg.url}: refused ${item.kind} ${item.state ?? ''} at ${item.t}, not retried`);
            st.failed++;
            break;
          }
          tries++;
          if (!down) report(`webhook ${cfg.url}: ${r}; retrying with backoff (queue ${size})`);
          down = true;
          if (tries > cfg.retries) {
            report(`webhook ${cfg.url}: gave up ${item.kind} ${item.state ?? ''} at ${item.t} after ${tries} attempts (${r})`);
            st.failed++;
            break;
          }
          if (stopped) return;
          await sleep(Math.min(maxDelay, minDelay * 2 ** (tries - 1)));
          if (stopped) return;
          // pushed out of a full queue while waiting: it was the oldest, it is dropped
          if (ring[head] !== item) break;
        }
        // the item may have been pushed out while in flight; only shift if it is still at the head
        if (ring[head] === item) { ring[head] = undefined; head = (head + 1) % cap; size--; }
      }
    } finally {
      running = false;
    }
  };

  return {
    send(a) {
      if (closing) { report(`webhook ${cfg.url}: closed, ${a.kind} ${a.state ?? ''} at ${a.t} not sent`); return; }
      if (size === cap) {
        ring[head] = undefined;
        head = (head + 1) % cap;
        size--;
        st.dropped++;
        droppedUnreported++;
        if (st.dropped === 1 || st.dropped % 1000 === 0) report(`webhook ${cfg.url}: queue full (${cap}), dropped ${st.dropped} oldest alert(s) so far`);
      }
      ring[(head + size) % cap] = a;
      size++;
      if (!running) loop = run();
    },
    stats: () => ({ ...st, pending: size }),
    async close(grace_ms = 5000) {
      closing = true;
      // the grace bounds a receiver that is down, not a long queue to a live one: it restarts on every
      // delivery, up to 10 × grace_ms in all
      const hardEnd = Date.now() + 10 * grace_ms;
      const stop = () => { stopped = true; inflight?.abort(new Error('closing')); wake?.(); };
      let timer: NodeJS.Timeout;
      const arm = () => {
        deadline = Math.min(hardEnd, Date.now() + grace_ms);
        timer = setTimeout(stop, Math.max(0, deadline - Date.now()));
      };
      arm();
      onDelivered = () => { clearTimeout(timer); arm(); };
      wake?.();
      await loop;
      stopped = true;
      onDelivered = null;
      clearTimeout(timer!);
      if (size > 0) report(`webhook ${cfg.url}: closing with ${size} alert(s) undelivered`);
      return { ...st, pending: size };
    },
  };
}
