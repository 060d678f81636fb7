/** Alert sink writing one human-readable line per alert state change. */
import type { AlertRecord } from './alert-record.js';

/** A sink the dispatcher fans out to. */
export interface AlertSink {
  /** enqueue one alert; synchronous, never throws, never blocks acquisition */
  send(a: AlertRecord): void;
  /** deliver what can be delivered within grace_ms, then stop */
  close(grace_ms?: number): Promise<unknown>;
}

/** Options of createStderrSink. */
export interface StderrSinkOptions {
  /** where lines go (default process.stderr) */
  stream?: { write(s: string): unknown };
}

/** One line: `<t> alert <station> run <run> <kind> <state> [<severity>] <message>`. */
export function formatAlertLine(a: AlertRecord): string {
  return `${a.t} alert ${a.station} run ${a.run} ${a.kind} ${a.state ?? 'event'} [${a.severity}] ${a.message}`.replace(/[\r\n]+/g, ' ');
}

/** Create the stderr sink. */
export function createStderrSink(opts: StderrSinkOptions = {}): AlertSink {
  const stream = opts.stream ?? process.stderr;
  return {
    send(a) {
      try { stream.write(formatAlertLine(a) + '\n'); } catch { /* a closed stderr must not stop acquisition */ }
    },
    async close() {},
  };
}
