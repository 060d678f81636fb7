import type { Incident } from '../src/domain/events.js';

/**
 * Rate limiter for `bad-input` incidents: at most one incident per interval of
 * host time, carrying the number of bad records since the previous one and the
 * first of them (its reason and a text snippet).
 */
export class BadInputLimiter {
  private lastEmit_ms = -Infinity;
  private count = 0;
  private first: { reason: string; snippet: string; record: number; t?: number } | null = null;

  /** @param what noun for the records ('line', 'frame'); @param interval_ms minimum host time between incidents, ms (default 1000) */
  constructor(private readonly what: string, private readonly interval_ms = 1000) {}

  /** Count one bad record; pushes an incident to out when the interval has passed. */
  report(out: Incident[], host_ms: number, reason: string, snippet: string, record: number, t?: number): void {
    this.count++;
    if (!this.first) this.first = { reason, snippet, record, t };
    this.due(out, host_ms);
  }

  /** Emit the pending count if the interval has passed (or always when force). */
  due(out: Incident[], host_ms: number, force = false): void {
    if (this.count === 0 || !this.first) return;
    if (!force && host_ms - this.lastEmit_ms < this.interval_ms) return;
    const f = this.first;
    const n = this.count;
    out.push({
      kind: 'bad-input',
      severity: 'warning',
      t: f.t,
      host_ms,
      message: `${n} bad ${this.what}${n === 1 ? '' : 's'}; first: ${this.what} ${f.record}: ${f.reason}${f.snippet ? `: ${f.snippet}` : ''}`,
      value: n,
      data: { count: n, reason: f.reason, snippet: f.snippet, record: f.record },
    });
    this.lastEmit_ms = host_ms;
    this.count = 0;
    this.first = null;
  }
}
