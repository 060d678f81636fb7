/**
 * What every wire decoder offers (WIRE.md), the shared rate limiter for
 * `bad-input` incidents, and the choice of decoder for a station.
 */
import type { ColumnRole, RawBlock } from '../src/config/block.js';
import type { Incident } from '../src/config/events.js';
import type { Station } from '../src/config/station.js';
import { LinesDecoder } from './lines-decoder.js';
import { FramesDecoder } from './frames-decoder.js';

/** Blocks decoded from one read, and the incidents it raised. */
export interface DecodeResult {
  blocks: RawBlock[];
  incidents: Incident[];
}

/** Counters a decoder keeps over its life. */
export interface DecoderStats {
  /** good samples (lines or frames) handed on */
  samples: number;
  /** rejected records: bad lines, bad frames, runs of unsynchronised bytes */
  badRecords: number;
  /** sequence jumps seen (frames only) */
  gaps: number;
  /** frames missing in those jumps (frames only) */
  lostFrames: number;
}

/** Bytes in, blocks out. A block holds what arrived in one push (capped). */
export interface Decoder {
  /** Decode one chunk of bytes that arrived at host wall time hostMs (ms since the epoch). */
  push(chunk: Uint8Array, hostMs: number): DecodeResult;
  /** End of input: decode what is left in the tail and report pending incidents. */
  flush(hostMs: number): DecodeResult;
  /**
   * The byte stream was broken (device lost and back): forget the carried
   * partial record, so its head is never joined to bytes from after the break.
   */
  resync(): void;
  readonly stats: DecoderStats;
}

/** Options of makeDecoder. */
export interface MakeDecoderOptions {
  /** host monotonic clock, seconds (default performance.now()/1000); stamps lines that carry no time */
  hostClock?: () => number;
  /** the stream may start in the middle of a record (a serial port opened while the device talks): drop the first line (lines only; default false) */
  midStream?: boolean;
  /** samples per block at most (default 4096) */
  blockCap?: number;
}

/** The decoder a station's `input` asks for. */
export function makeDecoder(station: Station, opts: MakeDecoderOptions = {}): Decoder {
  const input = station.input;
  if (input.format === 'frames') {
    if (!input.channels) throw new TypeError('input.channels: is required for format "frames"');
    return new FramesDecoder({ channels: input.channels as { role: ColumnRole; scale: number }[], blockCap: opts.blockCap });
  }
  return new LinesDecoder({
    columns: input.columns as ColumnRole[] | undefined,
    separator: input.separator,
    clockWrap: input.clock_wrap,
    hostClock: opts.hostClock,
    midStream: opts.midStream,
    blockCap: opts.blockCap,
  });
}

/**
 * Rate limiter for `bad-input` incidents: at most one incident per interval of
 * host time, carrying the number of bad records since the previous one and the
 * first of them (its reason and a text snippet).
 */
export class BadInputLimiter {
  private lastEmitMs = -Infinity;
  private count = 0;
  private first: { reason: string; snippet: string; record: number; t?: number } | null = null;

  /** @param what noun for the records ('line', 'frame'); @param intervalMs minimum host time between incidents, ms (default 1000) */
  constructor(private readonly what: string, private readonly intervalMs = 1000) {}

  /** Count one bad record; pushes an incident to out when the interval has passed. */
  report(out: Incident[], hostMs: number, reason: string, snippet: string, record: number, t?: number): void {
    this.count++;
    if (!this.first) this.first = { reason, snippet, record, t };
    this.due(out, hostMs);
  }

  /** Emit the pending count if the interval has passed (or always when force). */
  due(out: Incident[], hostMs: number, force = false): void {
    if (this.count === 0 || !this.first) return;
    if (!force && hostMs - this.lastEmitMs < this.intervalMs) return;
    const f = this.first;
    const n = this.count;
    out.push({
      kind: 'bad-input',
      severity: 'warning',
      t: f.t,
      hostMs,
      message: `${n} bad ${this.what}${n === 1 ? '' : 's'}; first: ${this.what} ${f.record}: ${f.reason}${f.snippet ? `: ${f.snippet}` : ''}`,
      value: n,
      data: { count: n, reason: f.reason, snippet: f.snippet, record: f.record },
    });
    this.lastEmitMs = hostMs;
    this.count = 0;
    this.first = null;
  }
}
