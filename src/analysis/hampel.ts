/**
 * Streaming Hampel filter: a sample is a spike when it lies more than
 * `threshold`·1.4826·MAD from the median of the 2k+1 samples centred on it
 * (k = half-width). 1.4826 makes the MAD a consistent estimate of σ for
 * Gaussian noise (1/Φ⁻¹(3/4); common practice, no source).
 *
 * Causal with a delay of k samples: the decision on sample i is made when
 * sample i+k arrives. At a segment's start the window is truncated to the
 * samples present ([start, i+k]); at its end (flush) to [i−k, end].
 * Unusable samples (saturated, invalid, NaN) take no part in any median and
 * are never themselves marked. A window with fewer than 3 usable samples
 * marks nothing. Cost: O(k) per sample (a sorted window kept by insertion).
 */

/** Decision codes returned by `HampelDetector.push`. */
export const HAMPEL_PENDING = 0;
export const HAMPEL_CLEAN = 1;
export const HAMPEL_SPIKE = 2;

/** Options of the Hampel detector. */
export interface HampelOptions {
  /** half-width k of the window, samples (window 2k+1); 0 disables marking */
  halfWidth: number;
  /** threshold n in units of the robust σ = 1.4826·MAD */
  threshold: number;
  /** floor on the robust σ, same unit as the values (default 0: the classic filter); set to the quantisation step for counts */
  minScale?: number;
}

/** Validate Hampel options; throws naming the field. */
export function checkHampelOptions(o: HampelOptions): Required<HampelOptions> {
  if (!Number.isInteger(o.halfWidth) || o.halfWidth < 0) throw new RangeError(`hampelHalfWidth: must be an integer ≥ 0 (got ${o.halfWidth})`);
  if (!(o.threshold > 0)) throw new RangeError(`hampelThreshold: must be > 0 (got ${o.threshold})`);
  const minScale = o.minScale ?? 0;
  if (!(minScale >= 0)) throw new RangeError(`minScale: must be ≥ 0 (got ${minScale})`);
  return { halfWidth: o.halfWidth, threshold: o.threshold, minScale };
}

/**
 * Hampel spike detector over one stream of samples. Push samples in order;
 * each push answers for the sample k places back. Call `flush` at the end of
 * a segment (a gap or the end of data) to decide the last k, then `reset`.
 */
export class HampelDetector {
  private readonly k: number;
  private readonly thr: number;
  private readonly minScale: number;
  /** ring of the last 2k+1 values and their usability */
  private readonly ringV: Float64Array;
  private readonly ringU: Uint8Array;
  /** usable values of the current window, sorted ascending */
  private readonly sorted: Float64Array;
  private m = 0;
  /** samples pushed in this segment */
  private count = 0;
  /** samples decided in this segment */
  private decided = 0;

  constructor(opts: HampelOptions) {
    const o = checkHampelOptions(opts);
    this.k = o.halfWidth;
    this.thr = o.threshold;
    this.minScale = o.minScale;
    const w = 2 * this.k + 1;
    this.ringV = new Float64Array(w);
    this.ringU = new Uint8Array(w);
    this.sorted = new Float64Array(w);
  }

  /** Half-width k: the delay of every decision, in samples. */
  get delay(): number {
    return this.k;
  }

  /** Feed one sample; returns HAMPEL_PENDING during the first k of a segment, else the decision for the sample k back. */
  push(x: number, usable: boolean): number {
    const w = this.ringV.length;
    const j = this.count;
    const ok = usable && Number.isFinite(x);
    const slot = j % w;
    // the sample leaving: j − (2k+1), outside the window of sample j − k
    const leaving = j >= w && this.ringU[slot] !== 0;
    if (leaving && ok) this.replace(this.ringV[slot], x);
    else {
      if (leaving) this.remove(this.ringV[slot]);
      if (ok) this.insert(x);
    }
    this.ringV[slot] = x;
    this.ringU[slot] = ok ? 1 : 0;
    this.count++;
    if (j < this.k) return HAMPEL_PENDING;
    return this.decide(j - this.k);
  }

  /**
   * Decide the samples still pending at the end of a segment, writing a
   * HAMPEL_CLEAN/HAMPEL_SPIKE code for each into out[0..) in order; returns how many.
   */
  flush(out: Uint8Array): number {
    const w = this.ringV.length;
    let n = 0;
    while (this.decided < this.count) {
      const c = this.decided;
      // the window of c at the segment's end is [c−k, count−1]: drop c−k−1
      const leaving = c - this.k - 1;
      if (leaving >= 0 && leaving >= this.count - w) {
        const slot = leaving % w;
        if (this.ringU[slot]) {
          this.remove(this.ringV[slot]);
          this.ringU[slot] = 2; // removed; keeps its usability out of later removals
        }
      }
      out[n++] = this.decide(c);
    }
    return n;
  }

  /** Start a new segment (after a gap): nothing before it enters any window. */
  reset(): void {
    this.m = 0;
    this.count = 0;
    this.decided = 0;
    this.ringU.fill(0);
  }

  private decide(c: number): number {
    this.decided = c + 1;
    const slot = c % this.ringV.length;
    if (this.ringU[slot] !== 1 || this.m < 3 || this.k === 0) return HAMPEL_CLEAN;
    const x = this.ringV[slot];
    const s = this.sorted;
    const m = this.m;
    const h = m >> 1;
    const med = m & 1 ? s[h] : 0.5 * (s[h - 1] + s[h]);
    const scale = Math.max(1.4826 * this.mad(med), this.minScale);
    return Math.abs(x - med) > this.thr * scale ? HAMPEL_SPIKE : HAMPEL_CLEAN;
  }

  /** Median of |s − med| by merging the two sorted runs either side of the median: O(m). */
  private mad(med: number): number {
    const s = this.sorted;
    const m = this.m;
    // split: first index with s[i] >= med; it is at or just below the middle
    let r = m >> 1;
    while (r > 0 && s[r - 1] >= med) r--;
    let l = r - 1;
    const want = m >> 1; // index of the upper middle deviation
    let prev = 0;
    let cur = 0;
    for (let i = 0; i <= want; i++) {
      const dl = l >= 0 ? med - s[l] : Infinity;
      const dr = r < m ? s[r] - med : Infinity;
      prev = cur;
      if (dl <= dr) {
        cur = dl;
        l--;
      } else {
        cur = dr;
        r++;
      }
    }
    return m & 1 ? cur : 0.5 * (prev + cur);
  }

  private insert(x: number): void {
    const s = this.sorted;
    let i = this.m;
    while (i > 0 && s[i - 1] > x) {
      s[i] = s[i - 1];
      i--;
    }
    s[i] = x;
    this.m++;
  }

  /** Remove `out` and insert `x` in one pass (the steady state: one sample in, one out). */
  private replace(out: number, x: number): void {
    const s = this.sorted;
    const m = this.m;
    let i = 0;
    while (i < m && s[i] !== out) i++;
    if (i === m) return this.insert(x);
    // slide the hole at i towards x's place
    if (x > out) {
      while (i + 1 < m && s[i + 1] < x) {
        s[i] = s[i + 1];
        i++;
      }
    } else {
      while (i > 0 && s[i - 1] > x) {
        s[i] = s[i - 1];
        i--;
      }
    }
    s[i] = x;
  }

  private remove(x: number): void {
    const s = this.sorted;
    const m = this.m;
    let i = 0;
    while (i < m && s[i] !== x) i++;
    if (i === m) return;
    for (; i < m - 1; i++) s[i] = s[i + 1];
    this.m--;
  }
}

/**
 * The streaming detector run over one whole segment (the same windows,
 * truncated at both ends): 1 where x[i] is a spike. For the one-shot `fit`,
 * which has the whole record at once.
 */
export function hampelSpikes(x: Float64Array, usable: Uint8Array | null, opts: HampelOptions): Uint8Array {
  const d = new HampelDetector(opts);
  const out = new Uint8Array(x.length);
  let n = 0;
  for (let i = 0; i < x.length; i++) {
    const r = d.push(x[i], usable ? usable[i] !== 0 : true);
    if (r !== HAMPEL_PENDING) out[n++] = r === HAMPEL_SPIKE ? 1 : 0;
  }
  const tail = new Uint8Array(d.delay + 1);
  const t = d.flush(tail);
  for (let i = 0; i < t; i++) out[n++] = tail[i] === HAMPEL_SPIKE ? 1 : 0;
  return out;
}
