/**
 * Fans each alert out to the sinks the station's `alerts` block configures:
 * stderr (a line), webhook (HTTP POST, queued), command (argv with the JSON on
 * stdin). dispatch() is synchronous and never throws; delivery problems go to
 * onError, never back through the sinks.
 */
import type { AlertsConfig } from '../config/station.js';
import { alertRecord, type AlertInput } from './alert-record.js';
import { createCommandSink, type CommandStats } from './command-sink.js';
import { createStderrSink, type AlertSink } from './stderr-sink.js';
import { createWebhookSink, type WebhookStats } from './webhook-sink.js';

/** Options of createDispatcher. */
export interface DispatcherOptions {
  /** stream of the stderr sink and of default error lines (default process.stderr) */
  stderr?: { write(s: string): unknown };
  /** delivery problems (default: a line on stderr prefixed "alert delivery:") */
  onError?: (message: string) => void;
  /** fetch for the webhook (default globalThis.fetch) */
  fetch?: typeof fetch;
  /** first webhook backoff delay, s (default 0.5) */
  webhookMinDelay_s?: number;
}

/** The dispatcher. */
export interface AlertDispatcher {
  /** deliver one alert to every configured sink (synchronous enqueue) */
  dispatch(a: AlertInput): void;
  /** names of the configured sinks */
  readonly sinks: string[];
  /** flush within grace_ms (default 5000), then stop */
  close(grace_ms?: number): Promise<{ webhook?: WebhookStats; command?: CommandStats }>;
}

/** Build the sinks from a station's alerts block. */
export function createDispatcher(alerts: AlertsConfig, opts: DispatcherOptions = {}): AlertDispatcher {
  const err = opts.stderr ?? process.stderr;
  const onError = opts.onError ?? ((m: string) => { try { err.write(`alert delivery: ${m}\n`); } catch { /* ignore */ } });
  const sinks: { name: string; sink: AlertSink }[] = [];
  if (alerts.stderr) sinks.push({ name: 'stderr', sink: createStderrSink({ stream: err }) });
  const webhook = alerts.webhook ? createWebhookSink(alerts.webhook, { onError, fetch: opts.fetch, minDelay_s: opts.webhookMinDelay_s }) : undefined;
  if (webhook) sinks.push({ name: 'webhook', sink: webhook });
  const command = alerts.command ? createCommandSink(alerts.command, { onError }) : undefined;
  if (command) sinks.push({ name: 'command', sink: command });
  return {
    sinks: sinks.map((s) => s.name),
    dispatch(a) {
      let rec;
      try { rec = alertRecord(a); } catch (e) { onError(`bad alert: ${(e as Error).message}`); return; }
      for (const s of sinks) {
        try { s.sink.send(rec); } catch (e) { onError(`${s.name}: ${(e as Error).message}`); }
      }
    },
    async close(grace_ms = 5000) {
      const [w, c] = await Promise.all([webhook?.close(grace_ms), command?.close(grace_ms)]);
      return { ...(w ? { webhook: w } : {}), ...(c ? { command: c } : {}) };
    },
  };
}
