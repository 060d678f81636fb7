/**
 * Buffered, chunked writer of one run's samples.
 */
import type { Database, Statement } from 'better-sqlite3';
import { encodeChunk, type EncodedChunk } from './codec.js';

export interface SampleWriterOptions {
  /** samples per chunk row (per channel); default 4096 */
  chunkSamples?: number;
  /** longest time (ms) data may wait in memory before flushIfDue commits it; default 1000 */
  maxLatency_ms?: number;
  /** sealed chunks held before they are committed without waiting for a flush; default 64 */
  maxPendingChunks?: number;
  /** shuffle + deflate float channels too: about half the bytes, about half the write speed; default false */
  deflateFloats?: boolean;
}

interface PendingRow extends EncodedChunk {
  channel: string;
  seq: number;
}

/**
 * Writes one run's samples into `sample_chunks`, one row per chunk of one channel.
 *
 * Samples are copied into per-channel typed-array buffers. A full chunk is
 * encoded and queued; `flush()` commits queued chunks and the current partial
 * chunk in one transaction, together with `runs.samples`. The partial chunk
 * keeps its `seq` and is rewritten as it grows, so a live run at 1 commit/s
 * still ends up with full-size rows. Times are seconds since the run's start.
 * Each row carries its CRC-32 (db/codec.ts), checked whenever it is read.
 */
export class SampleWriter {
  private readonly C: number;
  private readonly maxLatency_ms: number;
  private readonly maxPending: number;
  private readonly deflateFloats: boolean;
  private readonly tBuf: Float64Array;
  private readonly fBuf: Uint8Array;
  private anyFlag = false;
  private vBufs: Map<string, Float64Array> | null = null;
  private fill = 0;
  /** samples of the current chunk already committed as a partial row */
  private committedFill = 0;
  private seq: number;
  private pending: PendingRow[] = [];
  private readonly baseSamples: number;
  /** samples in sealed chunks (queued or committed) */
  private sealed = 0;
  private lastFlush_ms: number | undefined;
  private readonly upsert: Statement;
  private readonly setSamples: Statement;
  private readonly commit: (rows: PendingRow[], samples: number) => void;

  /**
   * @param db store opened with openStore
   * @param runId the run (from createRun); appending to a run that already holds
   *   samples continues after its last chunk and its sample count
   */
  constructor(db: Database, readonly runId: number, opts: SampleWriterOptions = {}) {
    const C = opts.chunkSamples ?? 4096;
    if (!Number.isInteger(C) || C < 1 || C > 1 << 20) throw new RangeError(`chunkSamples: must be an integer in 1…${1 << 20}, got ${C}`);
    const lat = opts.maxLatency_ms ?? 1000;
    if (!(lat >= 0)) throw new RangeError(`maxLatency_ms: must be ≥ 0, got ${lat}`);
    this.C = C;
    this.maxLatency_ms = lat;
    this.maxPending = Math.max(1, opts.maxPendingChunks ?? 64);
    this.deflateFloats = opts.deflateFloats ?? false;
    this.tBuf = new Float64Array(C);
    this.fBuf = new Uint8Array(C);
    const run = db.prepare('SELECT samples FROM runs WHERE id = ?').get(runId) as { samples: number } | undefined;
    if (!run) throw new Error(`SampleWriter: run ${runId} does not exist`);
    this.baseSamples = run.samples;
    const last = db.prepare('SELECT MAX(seq) AS s FROM sample_chunks WHERE run_id = ?').get(runId) as { s: number | null };
    this.seq = last.s === null ? 0 : last.s + 1;
    this.upsert = db.prepare(`
      INSERT INTO sample_chunks (run_id, channel, seq, t0_s, t1_s, count, time_kind, dt_s, time_blob,
                                 value_kind, value_base, value_blob, flags_blob, deflated, crc32)
      VALUES (@run_id, @channel, @seq, @t0_s, @t1_s, @count, @time_kind, @dt_s, @time_blob,
              @value_kind, @value_base, @value_blob, @flags_blob, @deflated, @crc32)
      ON CONFLICT (run_id, channel, seq) DO UPDATE SET
        t0_s = excluded.t0_s, t1_s = excluded.t1_s, count = excluded.count, time_kind = excluded.time_kind,
        dt_s = excluded.dt_s, time_blob = excluded.time_blob, value_kind = excluded.value_kind,
        value_base = excluded.value_base, value_blob = excluded.value_blob,
        flags_blob = excluded.flags_blob, deflated = excluded.deflated, crc32 = excluded.crc32`);
    this.setSamples = db.prepare('UPDATE runs SET samples = ? WHERE id = ?');
    this.commit = db.transaction((rows: PendingRow[], samples: number) => {
      for (const r of rows) {
        this.upsert.run({
          run_id: runId, channel: r.channel, seq: r.seq, t0_s: r.t0_s, t1_s: r.t1_s, count: r.count,
          time_kind: r.time_kind, dt_s: r.dt_s, time_blob: r.time_blob, value_kind: r.value_kind,
          value_base: r.value_base, value_blob: r.value_blob, flags_blob: r.flags_blob, deflated: r.deflated, crc32: r.crc32,
        });
      }
      this.setSamples.run(samples, runId);
    });
  }

  /** Samples appended so far, including the run's samples before this writer (committed or not). */
  get samples(): number {
    return this.baseSamples + this.sealed + this.fill;
  }

  /**
   * Append n samples (default t_s.length): times in seconds since the run's start,
   * one Float64Array per channel (the same channel names on every call), optional
   * FLAG_* bits per sample.
   */
  append(t_s: Float64Array, channels: Record<string, Float64Array>, flags?: Uint8Array, n: number = t_s.length): void {
    if (!Number.isInteger(n) || n < 0 || n > t_s.length) throw new RangeError(`append: n = ${n} outside 0…${t_s.length}`);
    if (flags && flags.length < n) throw new RangeError(`append: flags has ${flags.length} entries, need ${n}`);
    const names = Object.keys(channels);
    if (!this.vBufs) {
      if (names.length === 0) throw new Error('append: no channels given');
      this.vBufs = new Map(names.map((c) => [c, new Float64Array(this.C)]));
    } else if (names.length !== this.vBufs.size || names.some((c) => !this.vBufs!.has(c))) {
      throw new Error(`append: channels [${names.join(', ')}] differ from the run's [${[...this.vBufs.keys()].join(', ')}]`);
    }
    for (const c of names) {
      if (channels[c].length < n) throw new RangeError(`append: channel "${c}" has ${channels[c].length} samples, need ${n}`);
    }
    const bufs = this.vBufs;
    let i = 0;
    while (i < n) {
      const k = Math.min(n - i, this.C - this.fill);
      this.tBuf.set(t_s.subarray(i, i + k), this.fill);
      for (const [c, b] of bufs) b.set(channels[c].subarray(i, i + k), this.fill);
      if (flags) {
        this.fBuf.set(flags.subarray(i, i + k), this.fill);
        if (!this.anyFlag) for (let j = i; j < i + k; j++) if (flags[j] !== 0) { this.anyFlag = true; break; }
      } else {
        this.fBuf.fill(0, this.fill, this.fill + k);
      }
      this.fill += k;
      i += k;
      if (this.fill === this.C) this.seal();
    }
  }

  /** Commit if data has waited maxLatency_ms since the last commit (or never was committed); true if it wrote. */
  flushIfDue(now_ms: number): boolean {
    if (!this.dirty()) return false;
    if (this.lastFlush_ms !== undefined && now_ms - this.lastFlush_ms < this.maxLatency_ms) return false;
    this.flush();
    this.lastFlush_ms = now_ms;
    return true;
  }

  /** Commit all queued chunks and the current partial chunk in one transaction. */
  flush(): void {
    this.writePending(true);
  }

  private dirty(): boolean {
    return this.pending.length > 0 || this.fill !== this.committedFill;
  }

  /** Encode the current chunk of every channel (the first `fill` samples). */
  private encodeCurrent(): PendingRow[] {
    const rows: PendingRow[] = [];
    const flags = this.anyFlag ? this.fBuf : null;
    for (const [c, b] of this.vBufs!) {
      rows.push({ ...encodeChunk(this.tBuf, b, flags, 0, this.fill, { deflateFloats: this.deflateFloats }), channel: c, seq: this.seq });
    }
    return rows;
  }

  private seal(): void {
    for (const r of this.encodeCurrent()) this.pending.push(r);
    this.sealed += this.fill;
    this.fill = 0;
    this.committedFill = 0;
    this.anyFlag = false;
    this.seq++;
    if (this.pending.length >= this.maxPending * this.vBufs!.size) this.writePending(false);
  }

  private writePending(includePartial: boolean): void {
    const partial = includePartial && this.fill > 0 && this.fill !== this.committedFill;
    if (!partial && this.pending.length === 0) return;
    const rows = partial ? this.pending.concat(this.encodeCurrent()) : this.pending;
    const committedFill = partial ? this.fill : this.committedFill;
    this.commit(rows, this.baseSamples + this.sealed + committedFill);
    this.pending = [];
    this.committedFill = committedFill;
  }
}
