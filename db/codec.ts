/**
 * Chunk encoding for the sample store: pure functions from typed arrays to
 * compact little-endian blobs and back.
 *
 * Times (seconds since the run's start):
 *  - 'uniform': t_i = t0 + i·dt, no blob, used when every t_i is within
 *    1e-9·max(1,|t_i|) s + 1 ns of that line;
 *  - 'ns-varint': t_i rounded to integer nanoseconds after t0, successive
 *    differences as zigzag LEB128 varints (lossless to 1 ns).
 * Values:
 *  - 'ivarint': all values integers (|v| ≤ 2^51): value_base = v0, then zigzag
 *    varints of successive differences — lossless (encoder counts, frame i32s);
 *  - 'f32off': float64 base (middle of the chunk's range) + float32 offsets,
 *    so the error is float32 precision of the chunk's spread, not of |v|;
 *  - 'f64': raw float64, when the spread does not fit a float32.
 * Varint and flag blobs are stored deflateRaw'd (level 1) when that saves more
 * than 10 %; `deflated` holds one bit per blob (DEFLATED_*). Float blobs
 * ('f32off', 'f64') are deflated only on request (`deflateFloats`): the low
 * bytes of a noisy signal are random, so plain deflate saves ~12 % for ~1 ms
 * per 4096 samples, which would halve the store's throughput. When requested,
 * the float bytes are shuffled first (all byte 0s, then all byte 1s …, the
 * usual shuffle filter of scientific formats, common practice), which makes
 * deflate pay: ~2 bytes/sample instead of 4 for a 1e-3 rad swing with 1e-7 rad
 * noise. Flags: raw bytes, only when some flag is non-zero (else null).
 *
 * Every chunk carries a CRC-32 (`crc32`, node:zlib's, the ISO-HDLC polynomial of
 * zip and PNG) over its scalar fields and its blobs exactly as stored, so a
 * flipped bit anywhere in a chunk is found when it is read instead of decoding
 * to plausible garbage (chunkChecksum).
 */
import { crc32, deflateRawSync, inflateRawSync } from 'node:zlib';
import { endianness } from 'node:os';
import { FLAG_INVALID } from '../src/domain/block.js';

export type TimeKind = 'uniform' | 'ns-varint';
export type ValueKind = 'f32off' | 'ivarint' | 'f64';

export const DEFLATED_TIME = 1;
export const DEFLATED_VALUE = 2;
export const DEFLATED_FLAGS = 4;

/** One encoded chunk of one channel, as stored in a sample_chunks row. */
export interface EncodedChunk {
  count: number;
  t0_s: number;
  t1_s: number;
  time_kind: TimeKind;
  dt_s: number | null;
  time_blob: Buffer | null;
  value_kind: ValueKind;
  value_base: number | null;
  value_blob: Buffer;
  flags_blob: Buffer | null;
  deflated: number;
  /** chunkChecksum of the fields above */
  crc32: number;
}

/** Encoded times of a chunk. */
export interface EncodedTimes {
  kind: TimeKind;
  t0: number;
  dt: number | null;
  blob: Buffer | null;
}

/** Encoded values of a chunk. */
export interface EncodedValues {
  kind: ValueKind;
  base: number | null;
  blob: Buffer;
}

const LE = endianness() === 'LE';
/** Largest |integer| stored as 'ivarint': keeps differences and zigzag exact in a double. */
const IVARINT_MAX = 2 ** 51;
/** Largest half-spread stored as 'f32off' (float32 max is 3.4e38). */
const F32_MAX_OFFSET = 1e38;
/** Blobs shorter than this are not worth a deflate attempt. */
const DEFLATE_MIN_BYTES = 64;

let scratch = new Uint8Array(1 << 16);
function scratchFor(bytes: number): Uint8Array {
  if (scratch.length < bytes) scratch = new Uint8Array(Math.max(bytes, scratch.length * 2));
  return scratch;
}

/** Write x (integer, 0 ≤ x ≤ 2^53) as an LEB128 varint at p; returns the new position. */
function putVarint(out: Uint8Array, p: number, x: number): number {
  if (x < 0x80000000) {
    while (x >= 0x80) {
      out[p++] = (x & 0x7f) | 0x80;
      x >>>= 7;
    }
    out[p++] = x;
    return p;
  }
  while (x >= 0x80) {
    out[p++] = (x % 128) | 0x80;
    x = Math.floor(x / 128);
  }
  out[p++] = x;
  return p;
}

const zigzag = (d: number): number => (d >= 0 ? 2 * d : -2 * d - 1);

/** Decode `count` zigzag varint differences from `buf`, accumulating from `start` into out[1..]. */
function getZigzagDeltas(buf: Uint8Array, count: number, out: Float64Array, start: number, what: string): void {
  let p = 0;
  let acc = start;
  const len = buf.length;
  for (let i = 1; i <= count; i++) {
    let x = 0;
    let mul = 1;
    let b: number;
    do {
      if (p >= len) throw new Error(`corrupt ${what} blob: ends after ${i - 1} of ${count} values`);
      b = buf[p++];
      x += (b & 0x7f) * mul;
      mul *= 128;
    } while (b & 0x80);
    acc += x % 2 === 0 ? x / 2 : -(x + 1) / 2;
    out[i] = acc;
  }
  if (p !== len) throw new Error(`corrupt ${what} blob: ${len - p} trailing bytes`);
}

/** Copy a Uint8Array view into its own Buffer (the scratch area is reused). */
const own = (u: Uint8Array): Buffer => Buffer.from(u);

/** deflateRaw level 1 if that saves more than 10 %; returns [blob, deflated?]. */
export function maybeDeflate(blob: Buffer): [Buffer, boolean] {
  if (blob.length < DEFLATE_MIN_BYTES) return [blob, false];
  const z = deflateRawSync(blob, { level: 1 });
  return z.length < 0.9 * blob.length ? [z, true] : [blob, false];
}

/** Encode t[start … start+n) (finite seconds, non-decreasing not required). */
export function encodeTimes(t: Float64Array, start = 0, n = t.length - start): EncodedTimes {
  if (n <= 0) throw new RangeError('encodeTimes: empty chunk');
  const t0 = t[start];
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(t[start + i])) throw new RangeError(`encodeTimes: t[${start + i}] = ${t[start + i]} is not finite`);
  }
  const dt = n > 1 ? (t[start + n - 1] - t0) / (n - 1) : 0;
  let uniform = true;
  for (let i = 1; i < n; i++) {
    const ti = t[start + i];
    const tol = 1e-9 * Math.max(1, Math.abs(ti)) + 1e-9;
    if (Math.abs(ti - (t0 + i * dt)) > tol) {
      uniform = false;
      break;
    }
  }
  if (uniform) return { kind: 'uniform', t0, dt, blob: null };
  const out = scratchFor(n * 10);
  let p = 0;
  let prev = 0;
  for (let i = 1; i < n; i++) {
    const ns = Math.round((t[start + i] - t0) * 1e9);
    p = putVarint(out, p, zigzag(ns - prev));
    prev = ns;
  }
  return { kind: 'ns-varint', t0, dt: null, blob: own(out.subarray(0, p)) };
}

/** Decode `count` times; `blob` already inflated. */
export function decodeTimes(kind: string, t0: number, dt: number | null, blob: Uint8Array | null, count: number): Float64Array {
  const t = new Float64Array(count);
  if (count === 0) return t;
  if (kind === 'uniform') {
    const d = dt ?? 0;
    for (let i = 0; i < count; i++) t[i] = t0 + i * d;
    return t;
  }
  if (kind !== 'ns-varint') throw new Error(`unknown time encoding "${kind}"`);
  if (!blob) throw new Error('corrupt chunk: ns-varint times without a blob');
  t[0] = 0;
  getZigzagDeltas(blob, count - 1, t, 0, 'time');
  for (let i = 1; i < count; i++) t[i] = t0 + t[i] / 1e9;
  t[0] = t0;
  return t;
}

/** Encode v[start … start+n): ivarint when all are integers, else f32off (or f64). */
export function encodeValues(v: Float64Array, start = 0, n = v.length - start): EncodedValues {
  if (n <= 0) throw new RangeError('encodeValues: empty chunk');
  let integers = true;
  let min = Infinity;
  let max = -Infinity;
  for (let i = start; i < start + n; i++) {
    const x = v[i];
    if (integers && !(Number.isInteger(x) && Math.abs(x) <= IVARINT_MAX && !(x === 0 && 1 / x < 0))) integers = false;
    if (x < min) min = x;
    if (x > max) max = x;
  }
  if (integers) {
    const out = scratchFor(n * 10);
    let p = 0;
    let prev = v[start];
    for (let i = start + 1; i < start + n; i++) {
      p = putVarint(out, p, zigzag(v[i] - prev));
      prev = v[i];
    }
    return { kind: 'ivarint', base: v[start], blob: own(out.subarray(0, p)) };
  }
  // min/max skip NaN by the comparisons above; ±Infinity makes the spread infinite → f64
  const finiteRange = Number.isFinite(min) && Number.isFinite(max);
  const base = finiteRange ? min + (max - min) / 2 : 0;
  const noValue = min === Infinity && max === -Infinity; // all NaN
  if (noValue || (finiteRange && (max - min) / 2 <= F32_MAX_OFFSET)) {
    const blob = Buffer.allocUnsafe(4 * n);
    if (LE) {
      const f = new Float32Array(blob.buffer, blob.byteOffset, n);
      for (let i = 0; i < n; i++) f[i] = v[start + i] - base;
    } else {
      for (let i = 0; i < n; i++) blob.writeFloatLE(v[start + i] - base, 4 * i);
    }
    return { kind: 'f32off', base, blob };
  }
  const blob = Buffer.allocUnsafe(8 * n);
  for (let i = 0; i < n; i++) blob.writeDoubleLE(v[start + i], 8 * i);
  return { kind: 'f64', base: null, blob };
}

/** Decode `count` values; `blob` already inflated. */
export function decodeValues(kind: string, base: number | null, blob: Uint8Array, count: number): Float64Array {
  const v = new Float64Array(count);
  if (count === 0) return v;
  if (kind === 'ivarint') {
    v[0] = base ?? 0;
    getZigzagDeltas(blob, count - 1, v, v[0], 'value');
    return v;
  }
  if (kind === 'f32off') {
    if (blob.length !== 4 * count) throw new Error(`corrupt chunk: f32off blob has ${blob.length} bytes for ${count} values`);
    const b = base ?? 0;
    if (LE && blob.byteOffset % 4 === 0) {
      const f = new Float32Array(blob.buffer, blob.byteOffset, count);
      for (let i = 0; i < count; i++) v[i] = b + f[i];
    } else {
      const dv = new DataView(blob.buffer, blob.byteOffset, blob.length);
      for (let i = 0; i < count; i++) v[i] = b + dv.getFloat32(4 * i, true);
    }
    return v;
  }
  if (kind === 'f64') {
    if (blob.length !== 8 * count) throw new Error(`corrupt chunk: f64 blob has ${blob.length} bytes for ${count} values`);
    const dv = new DataView(blob.buffer, blob.byteOffset, blob.length);
    for (let i = 0; i < count; i++) v[i] = dv.getFloat64(8 * i, true);
    return v;
  }
  throw new Error(`unknown value encoding "${kind}"`);
}

/** Byte-shuffle: element size `w`, element i's byte b goes to b·n + i. */
export function shuffleBytes(src: Uint8Array, w: number): Buffer {
  const n = src.length / w;
  const out = Buffer.allocUnsafe(src.length);
  for (let b = 0; b < w; b++) {
    const o = b * n;
    for (let i = 0, j = b; i < n; i++, j += w) out[o + i] = src[j];
  }
  return out;
}

/** Inverse of shuffleBytes. */
export function unshuffleBytes(src: Uint8Array, w: number): Buffer {
  const n = src.length / w;
  const out = Buffer.allocUnsafe(src.length);
  for (let b = 0; b < w; b++) {
    const o = b * n;
    for (let i = 0, j = b; i < n; i++, j += w) out[j] = src[o + i];
  }
  return out;
}

const floatWidth = (kind: string): number => (kind === 'f32off' ? 4 : kind === 'f64' ? 8 : 0);

/** Options for encodeChunk. */
export interface EncodeChunkOptions {
  /** also try shuffle + deflate on float value blobs (smaller, ~2× slower to write); default false */
  deflateFloats?: boolean;
}

/** Encode one chunk of one channel: times, values and (optional) flags, with deflate where it pays. */
export function encodeChunk(t: Float64Array, v: Float64Array, flags: Uint8Array | null, start = 0, n = t.length - start, opts: EncodeChunkOptions = {}): EncodedChunk {
  const et = encodeTimes(t, start, n);
  const ev = encodeValues(v, start, n);
  let deflated = 0;
  let timeBlob = et.blob;
  if (timeBlob) {
    const [b, z] = maybeDeflate(timeBlob);
    timeBlob = b;
    if (z) deflated |= DEFLATED_TIME;
  }
  let valueBlob = ev.blob;
  const w = floatWidth(ev.kind);
  if (w === 0 || opts.deflateFloats) {
    const [b, z] = maybeDeflate(w === 0 ? ev.blob : shuffleBytes(ev.blob, w));
    if (z) {
      valueBlob = b;
      deflated |= DEFLATED_VALUE;
    }
  }
  let flagsBlob: Buffer | null = null;
  if (flags) {
    let any = false;
    for (let i = start; i < start + n; i++) {
      if (flags[i] !== 0) {
        any = true;
        break;
      }
    }
    if (any) {
      const [b, z] = maybeDeflate(own(flags.subarray(start, start + n)));
      flagsBlob = b;
      if (z) deflated |= DEFLATED_FLAGS;
    }
  }
  const chunk = {
    count: n,
    t0_s: et.t0,
    t1_s: t[start + n - 1],
    time_kind: et.kind,
    dt_s: et.dt,
    time_blob: timeBlob,
    value_kind: ev.kind,
    value_base: ev.base,
    value_blob: valueBlob,
    flags_blob: flagsBlob,
    deflated,
  };
  return { ...chunk, crc32: chunkChecksum(chunk) };
}

/** The fields of a stored chunk that its checksum covers. */
export type ChecksummedChunk = Pick<ChunkRow, 'count' | 't0_s' | 't1_s' | 'time_kind' | 'dt_s' | 'time_blob' | 'value_kind' | 'value_base' | 'value_blob' | 'flags_blob' | 'deflated'>;

const EMPTY = new Uint8Array(0);

/**
 * CRC-32 of a chunk as stored: its scalars (numbers in their shortest exact
 * decimal form, which SQLite's REAL and INTEGER give back bit for bit), the
 * length of each blob or its absence, then the blobs' bytes.
 */
export function chunkChecksum(c: ChecksummedChunk): number {
  const len = (b: Uint8Array | null) => (b === null ? -1 : b.length);
  const head = `${c.count}|${c.t0_s}|${c.t1_s}|${c.time_kind}|${c.dt_s}|${c.value_kind}|${c.value_base}|${c.deflated}|${len(c.time_blob)}|${len(c.value_blob)}|${len(c.flags_blob)}`;
  let x = crc32(head);
  x = crc32(c.time_blob ?? EMPTY, x);
  x = crc32(c.value_blob, x);
  return crc32(c.flags_blob ?? EMPTY, x);
}

/** A stored chunk row as read back (blobs are Buffers). */
export interface ChunkRow {
  count: number;
  t0_s: number;
  t1_s: number;
  time_kind: string;
  dt_s: number | null;
  time_blob: Uint8Array | null;
  value_kind: string;
  value_base: number | null;
  value_blob: Uint8Array;
  flags_blob: Uint8Array | null;
  deflated: number;
}

/** Decoded samples of one chunk. */
export interface DecodedChunk {
  t: Float64Array;
  v: Float64Array;
  flags: Uint8Array;
}

/** Decode a stored chunk row into times, values and flags (zeros when none were stored). */
export function decodeChunk(row: ChunkRow): DecodedChunk {
  const inflate = (b: Uint8Array, bit: number): Uint8Array => (row.deflated & bit ? inflateRawSync(b) : b);
  const t = decodeTimes(row.time_kind, row.t0_s, row.dt_s, row.time_blob ? inflate(row.time_blob, DEFLATED_TIME) : null, row.count);
  let vb = inflate(row.value_blob, DEFLATED_VALUE);
  const w = floatWidth(row.value_kind);
  // deflated float blobs were byte-shuffled before deflate
  if (w > 0 && row.deflated & DEFLATED_VALUE) vb = unshuffleBytes(vb, w);
  const v = decodeValues(row.value_kind, row.value_base, vb, row.count);
  const flags = new Uint8Array(row.count);
  if (row.flags_blob) {
    const f = inflate(row.flags_blob, DEFLATED_FLAGS);
    if (f.length !== row.count) throw new Error(`corrupt chunk: ${f.length} flag bytes for ${row.count} samples`);
    flags.set(f);
  }
  return { t, v, flags };
}

/** How far a stored chunk can be trusted. */
export type ChunkState = 'verified' | 'unverified' | 'corrupt';

/** A stored chunk row with its checksum (null: written before checksums, schema < 3). */
export interface CheckedChunkRow extends ChunkRow {
  crc32: number | null;
}

/** The outcome of verifying and decoding one stored chunk. */
export type InspectedChunk =
  | { state: 'verified' | 'unverified'; chunk: DecodedChunk }
  | { state: 'corrupt'; problem: 'checksum' | 'undecodable'; detail: string };

const hex = (x: number): string => `0x${(x >>> 0).toString(16).padStart(8, '0')}`;

/**
 * Verify a stored chunk against its CRC-32, then decode it. A mismatch or a
 * blob that does not decode is reported, never decoded into numbers; a chunk
 * without a checksum is decoded and marked unverified.
 */
export function inspectChunk(row: CheckedChunkRow): InspectedChunk {
  if (row.crc32 !== null && row.crc32 !== undefined) {
    const got = chunkChecksum(row);
    if (got !== row.crc32) return { state: 'corrupt', problem: 'checksum', detail: `stored CRC-32 ${hex(row.crc32)}, contents give ${hex(got)}` };
  }
  try {
    const chunk = decodeChunk(row);
    return { state: row.crc32 === null || row.crc32 === undefined ? 'unverified' : 'verified', chunk };
  } catch (e) {
    return { state: 'corrupt', problem: 'undecodable', detail: (e as Error).message };
  }
}

/** Largest chunk a masked stand-in is made for (the writer's own cap); beyond it the row's count is itself garbage. */
const MASK_MAX = 1 << 20;

/**
 * Stand-in samples for a corrupt chunk: `count` times spread evenly from t0_s
 * to t1_s, values NaN, every flag FLAG_INVALID. Empty when the row's own
 * count or times are not believable.
 */
export function maskedChunk(row: Pick<ChunkRow, 'count' | 't0_s' | 't1_s'>): DecodedChunk {
  const n = row.count;
  const ok = Number.isInteger(n) && n >= 1 && n <= MASK_MAX && Number.isFinite(row.t0_s) && Number.isFinite(row.t1_s) && row.t1_s >= row.t0_s;
  if (!ok) return { t: new Float64Array(0), v: new Float64Array(0), flags: new Uint8Array(0) };
  const t = new Float64Array(n);
  const dt = n > 1 ? (row.t1_s - row.t0_s) / (n - 1) : 0;
  for (let i = 0; i < n; i++) t[i] = row.t0_s + i * dt;
  t[n - 1] = row.t1_s;
  return { t, v: new Float64Array(n).fill(NaN), flags: new Uint8Array(n).fill(FLAG_INVALID) };
}
