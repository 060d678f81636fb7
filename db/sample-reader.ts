/**
 * Reading stored samples back: whole ranges or chunk by chunk. Every chunk is
 * checked against its CRC-32 first; a corrupt one is never decoded into
 * numbers (see ChunkProblem).
 */
import type { Database } from 'better-sqlite3';
import { inspectChunk, maskedChunk, type CheckedChunkRow, type DecodedChunk } from './codec.js';
import { RuntimeError } from '../src/domain/errors.js';

/** A stored chunk that could not be trusted; its samples were handed on masked (FLAG_INVALID, values NaN). */
export interface ChunkProblem {
  run: number;
  channel: string;
  seq: number;
  t0_s: number;
  t1_s: number;
  /** samples the row says it holds */
  count: number;
  /** `checksum`: the stored CRC-32 does not match the contents; `undecodable`: the blobs do not decode */
  problem: 'checksum' | 'undecodable';
  detail: string;
  /** samples handed on in the chunk's place (0 when even its count and times are not believable) */
  masked: number;
}

export interface ReadSamplesOptions {
  /** first time to include, seconds since the run's start (inclusive); default: from the start */
  from_s?: number;
  /** time to stop at, seconds since the run's start (exclusive); default: to the end */
  to_s?: number;
  /**
   * called once for each corrupt chunk, whose samples then come back masked;
   * without it a corrupt chunk throws CorruptChunkError (never silent garbage)
   */
  onCorrupt?: (p: ChunkProblem) => void;
}

export interface IterateChunksOptions extends ReadSamplesOptions {
  /** chunk rows fetched per query (each query is a short read); default 64 */
  batchChunks?: number;
}

/** One stored chunk, decoded and trimmed to the requested range. */
export interface SampleChunk extends DecodedChunk {
  seq: number;
  /** `verified` by its CRC-32; `unverified`: written before checksums; `masked`: corrupt, stand-in samples */
  state: 'verified' | 'unverified' | 'masked';
}

/** A corrupt chunk met by a reader that did not ask to handle it: exit 1, naming the chunk. */
export class CorruptChunkError extends RuntimeError {
  constructor(readonly chunk: ChunkProblem) {
    super(`${describeChunkProblem(chunk)} (run \`fibrewatch check\` for the whole store)`);
    this.name = 'CorruptChunkError';
  }
}

/** One line for people: `run 3, channel angle, chunk 12 (t_s 100 … 304.75, 4096 samples): checksum mismatch (…)`. */
export function describeChunkProblem(p: ChunkProblem): string {
  const what = p.problem === 'checksum' ? 'checksum mismatch' : 'cannot be decoded';
  return `run ${p.run}, channel ${p.channel}, chunk ${p.seq} (t_s ${p.t0_s} … ${p.t1_s}, ${p.count} samples): ${what} (${p.detail})`;
}

interface Row extends CheckedChunkRow {
  seq: number;
}

const SELECT = `
  SELECT seq, count, t0_s, t1_s, time_kind, dt_s, time_blob, value_kind, value_base, value_blob, flags_blob, deflated, crc32
  FROM sample_chunks
  WHERE run_id = ? AND channel = ? AND seq > ? AND t1_s >= ? AND t0_s < ?
  ORDER BY seq LIMIT ?`;

/**
 * Decoded chunks of one channel in time order, fetched in small batches so no
 * read stays open between batches (a long export never pins the WAL).
 */
export function* iterateChunks(db: Database, runId: number, channel: string, opts: IterateChunksOptions = {}): Generator<SampleChunk> {
  const from = opts.from_s ?? -Infinity;
  const to = opts.to_s ?? Infinity;
  const batch = Math.max(1, Math.floor(opts.batchChunks ?? 64));
  // SQLite has no ±Infinity literal in a bound REAL: use ±1e308 as "unbounded"
  const stmt = db.prepare(SELECT);
  let after = -1;
  for (;;) {
    const rows = stmt.all(runId, channel, after, Math.max(from, -1e308), Math.min(to, 1e308), batch) as Row[];
    for (const row of rows) {
      const c = readStoredChunk(row, runId, channel, opts);
      if (c) yield c;
    }
    if (rows.length < batch) return;
    after = rows[rows.length - 1].seq;
  }
}

/**
 * One stored chunk row (from either store) verified, decoded and trimmed to
 * [from_s, to_s); undefined when nothing of it is in range. A corrupt row
 * comes back masked and is told to `onCorrupt`, or throws CorruptChunkError.
 */
export function readStoredChunk(row: CheckedChunkRow & { seq: number }, runId: number, channel: string, opts: ReadSamplesOptions = {}): SampleChunk | undefined {
  const got = inspectChunk(row);
  let d: DecodedChunk;
  let state: SampleChunk['state'];
  if (got.state === 'corrupt') {
    d = maskedChunk(row);
    state = 'masked';
    const p: ChunkProblem = {
      run: runId, channel, seq: row.seq, t0_s: row.t0_s, t1_s: row.t1_s, count: row.count,
      problem: got.problem, detail: got.detail, masked: d.t.length,
    };
    if (!opts.onCorrupt) throw new CorruptChunkError(p);
    opts.onCorrupt(p);
  } else {
    d = got.chunk;
    state = got.state;
  }
  const c = trim(d, opts.from_s ?? -Infinity, opts.to_s ?? Infinity);
  return c.t.length > 0 ? { ...c, seq: row.seq, state } : undefined;
}

/** Keep samples with from ≤ t < to (times within a chunk are in order). */
function trim(d: DecodedChunk, from: number, to: number): DecodedChunk {
  const n = d.t.length;
  if (n === 0 || (d.t[0] >= from && d.t[n - 1] < to)) return d;
  let a = 0;
  while (a < n && d.t[a] < from) a++;
  let b = n;
  while (b > a && d.t[b - 1] >= to) b--;
  return { t: d.t.subarray(a, b), v: d.v.subarray(a, b), flags: d.flags.subarray(a, b) };
}

/** All samples of one channel of a run within [from_s, to_s), as typed arrays. */
export function readSamples(db: Database, runId: number, channel: string, opts: ReadSamplesOptions = {}): { t: Float64Array; v: Float64Array; flags: Uint8Array } {
  return concatChunks(iterateChunks(db, runId, channel, opts));
}

/** Chunks gathered into one set of typed arrays (the chunks are held until the total is known). */
export function concatChunks(chunks: Iterable<{ t: Float64Array; v: Float64Array; flags: Uint8Array }>): { t: Float64Array; v: Float64Array; flags: Uint8Array } {
  const parts = [...chunks];
  let n = 0;
  for (const c of parts) n += c.t.length;
  const t = new Float64Array(n), v = new Float64Array(n), flags = new Uint8Array(n);
  let p = 0;
  for (const c of parts) {
    t.set(c.t, p);
    v.set(c.v, p);
    flags.set(c.flags, p);
    p += c.t.length;
  }
  return { t, v, flags };
}

/** Channel names stored for a run. */
export function listChannels(db: Database, runId: number): string[] {
  return (db.prepare('SELECT DISTINCT channel FROM sample_chunks WHERE run_id = ? ORDER BY channel').all(runId) as { channel: string }[]).map((r) => r.channel);
}
