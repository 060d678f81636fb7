/**
 * Min and max of a sampled signal per time bucket: what a chart of millions of
 * samples needs to draw every swing's extremes at a few thousand points.
 * Bucket k covers [origin_s + k·width_s, origin_s + (k+1)·width_s); samples
 * arrive block by block (typed arrays), in any order. A fine grid of such
 * buckets merges exactly into coarser ones (m whole cells per bucket), so one
 * pass over the samples serves every zoom level coarser than the grid.
 */
import { FLAG_INVALID } from '../domain/block.js';

/** Non-empty buckets as arrays, each at its bucket's centre. */
export interface MinMaxSeries {
  t_s: number[];
  min: number[];
  max: number[];
  /** samples in each bucket */
  count: number[];
}

/** Buckets of one width from one origin, growing as later samples arrive. */
export class MinMaxBuckets {
  private mins: Float64Array;
  private maxs: Float64Array;
  private counts: Uint32Array;
  /** buckets in use: one past the highest bucket that holds a sample (or was kept by truncate) */
  private used = 0;

  /**
   * @param origin_s start of bucket 0, s
   * @param width_s bucket width, s (> 0)
   * @param limit buckets beyond this index are never made: samples there are ignored (default: no limit)
   */
  constructor(readonly origin_s: number, readonly width_s: number, readonly limit = Infinity) {
    if (!(width_s > 0) || !Number.isFinite(width_s)) throw new RangeError(`MinMaxBuckets: width_s must be a finite number > 0 (got ${width_s})`);
    if (!Number.isFinite(origin_s)) throw new RangeError(`MinMaxBuckets: origin_s must be finite (got ${origin_s})`);
    const cap = Math.min(1024, Number.isFinite(limit) ? Math.max(1, limit) : 1024);
    this.mins = new Float64Array(cap).fill(Infinity);
    this.maxs = new Float64Array(cap).fill(-Infinity);
    this.counts = new Uint32Array(cap);
  }

  /** Buckets in use (the highest index holding a sample, plus one). */
  get length(): number {
    return this.used;
  }

  /** Samples counted in bucket k. */
  countAt(k: number): number {
    return k < this.used ? this.counts[k] : 0;
  }

  /**
   * Add samples. Samples before the origin, at or after `end_s`, non-finite, or
   * flagged with any of `skipFlags` (default: invalid) are left out.
   */
  add(t: ArrayLike<number>, v: ArrayLike<number>, flags?: ArrayLike<number>, end_s = Infinity, skipFlags = FLAG_INVALID): void {
    const o = this.origin_s, w = this.width_s, lim = this.limit;
    for (let i = 0; i < t.length; i++) {
      const ti = t[i], vi = v[i];
      if (!(ti >= o) || !(ti < end_s) || !Number.isFinite(vi) || (flags && flags[i] & skipFlags)) continue;
      let k = Math.floor((ti - o) / w);
      // (t − o)/w can round up to `limit` for a t just below the range's end
      if (k >= lim) {
        if (Number.isFinite(end_s)) k = lim - 1;
        else continue;
      }
      if (k >= this.mins.length) this.grow(k + 1);
      if (vi < this.mins[k]) this.mins[k] = vi;
      if (vi > this.maxs[k]) this.maxs[k] = vi;
      this.counts[k]++;
      if (k >= this.used) this.used = k + 1;
    }
  }

  /** Forget buckets from k on (to add their samples again after more have been stored). */
  truncate(k: number): void {
    const from = Math.max(0, Math.floor(k));
    if (from >= this.used) return;
    this.mins.fill(Infinity, from, this.used);
    this.maxs.fill(-Infinity, from, this.used);
    this.counts.fill(0, from, this.used);
    this.used = from;
  }

  /**
   * Merge whole buckets into coarser ones over [from_s, to_s), at most
   * `maxBuckets` of them: the range is widened to bucket edges, and each new
   * bucket takes m = ceil(cells / maxBuckets) cells, starting at the cell that
   * holds from_s. Exact: the result equals bucketing the samples directly with
   * origin at that cell's start and width m·width_s.
   */
  merge(from_s: number, to_s: number, maxBuckets: number): MinMaxBuckets {
    const w = this.width_s;
    const c0 = Math.max(0, Math.floor((from_s - this.origin_s) / w));
    const c1 = Math.min(this.used, Math.ceil((to_s - this.origin_s) / w));
    const m = Math.max(1, Math.ceil(Math.max(0, c1 - c0) / Math.max(1, Math.floor(maxBuckets))));
    return this.mergeCells(c0, c1, m);
  }

  /** The same samples in buckets `factor` times wider, from the same origin (exact, like merge). */
  coarsen(factor: number): MinMaxBuckets {
    return this.mergeCells(0, this.used, Math.max(1, Math.floor(factor)));
  }

  /** Samples counted in the buckets that overlap [from_s, to_s). */
  countIn(from_s: number, to_s: number): number {
    const w = this.width_s;
    const c0 = Math.max(0, Math.floor((from_s - this.origin_s) / w));
    const c1 = Math.min(this.used, Math.ceil((to_s - this.origin_s) / w));
    let n = 0;
    for (let c = c0; c < c1; c++) n += this.counts[c];
    return n;
  }

  /** The non-empty buckets, each at its centre. */
  series(): MinMaxSeries {
    const out: MinMaxSeries = { t_s: [], min: [], max: [], count: [] };
    for (let k = 0; k < this.used; k++) {
      if (this.counts[k] === 0) continue;
      out.t_s.push(this.origin_s + (k + 0.5) * this.width_s);
      out.min.push(this.mins[k]);
      out.max.push(this.maxs[k]);
      out.count.push(this.counts[k]);
    }
    return out;
  }

  /** Memory held, bytes (for a cache that keeps many). */
  get bytes(): number {
    return this.mins.byteLength + this.maxs.byteLength + this.counts.byteLength;
  }

  /** Cells [c0, c1) merged m at a time into a new set starting at cell c0. */
  private mergeCells(c0: number, c1: number, m: number): MinMaxBuckets {
    const out = new MinMaxBuckets(this.origin_s + c0 * this.width_s, m * this.width_s);
    const n = Math.ceil(Math.max(0, c1 - c0) / m);
    if (n > 0) out.grow(n);
    for (let c = c0; c < c1; c++) {
      if (this.counts[c] === 0) continue;
      const k = Math.floor((c - c0) / m);
      if (this.mins[c] < out.mins[k]) out.mins[k] = this.mins[c];
      if (this.maxs[c] > out.maxs[k]) out.maxs[k] = this.maxs[c];
      out.counts[k] += this.counts[c];
      if (k >= out.used) out.used = k + 1;
    }
    return out;
  }

  private grow(n: number): void {
    let cap = this.mins.length;
    while (cap < n) cap *= 2;
    if (Number.isFinite(this.limit)) cap = Math.min(cap, Math.max(n, this.limit));
    const mins = new Float64Array(cap).fill(Infinity), maxs = new Float64Array(cap).fill(-Infinity), counts = new Uint32Array(cap);
    mins.set(this.mins.subarray(0, this.used));
    maxs.set(this.maxs.subarray(0, this.used));
    counts.set(this.counts.subarray(0, this.used));
    this.mins = mins;
    this.maxs = maxs;
    this.counts = counts;
  }
}
