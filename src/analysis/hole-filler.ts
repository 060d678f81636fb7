/**
 * Keep the sample grid uniform across small holes: a line lost to bad input
 * or a dropped frame leaves a hole of a few sample intervals; the FFT seed and
 * the decimator need uniform sampling, so each missing slot is filled with a
 * masked placeholder (NaN, FLAG_INVALID). Longer jumps are gaps, left alone.
 */
import { FLAG_INVALID } from '../domain/block.js';

export interface FilledBlock {
  n: number;
  t: Float64Array;
  y: Float64Array;
  flags: Uint8Array;
  channels: Record<string, Float64Array>;
}

export class HoleFiller {
  private last: number | undefined;
  private dt: number | undefined;
  private readonly ref: number[] = [];

  /**
   * @param gapFactor a jump longer than gapFactor × the reference interval is a gap, not a hole (default 5, as `clean`)
   * @param referenceSamples intervals whose median is the reference interval (default 64)
   */
  constructor(private readonly gapFactor = 5, private readonly referenceSamples = 64) {}

  /** The reference sample interval, s (known after the first samples). */
  get interval_s(): number | undefined {
    return this.dt;
  }

  /** Process one block; returns it unchanged when it has no holes. */
  process(t: Float64Array, y: Float64Array, flags: Uint8Array, channels: Record<string, Float64Array | undefined>, n = t.length): FilledBlock {
    const before = this.last;
    const ch = Object.fromEntries(Object.entries(channels).filter(([, v]) => v !== undefined)) as Record<string, Float64Array>;
    if (this.dt === undefined) {
      for (let i = 0; i < n && this.ref.length < this.referenceSamples; i++) {
        const prev = i > 0 ? t[i - 1] : this.last;
        if (prev !== undefined && t[i] > prev) this.ref.push(t[i] - prev);
      }
      if (this.ref.length >= Math.min(this.referenceSamples, 8)) {
        const s = [...this.ref].sort((a, b) => a - b);
        this.dt = s[s.length >> 1];
      }
    }
    const dt = this.dt;
    let extra = 0;
    if (dt !== undefined) {
      let prev = before;
      for (let i = 0; i < n; i++) {
        if (prev !== undefined) extra += missing(t[i] - prev, dt, this.gapFactor);
        prev = t[i];
      }
    }
    if (n) this.last = t[n - 1];
    if (extra === 0) return { n, t: t.subarray(0, n), y: y.subarray(0, n), flags: flags.subarray(0, n), channels: ch };
    const m = n + extra;
    const T = new Float64Array(m), Y = new Float64Array(m), F = new Uint8Array(m);
    const C: Record<string, Float64Array> = {};
    for (const k of Object.keys(ch)) C[k] = new Float64Array(m);
    let j = 0;
    let prev = before;
    for (let i = 0; i < n; i++) {
      const k = prev === undefined ? 0 : missing(t[i] - prev, dt!, this.gapFactor);
      for (let q = 1; q <= k; q++) {
        T[j] = prev! + q * ((t[i] - prev!) / (k + 1));
        Y[j] = NaN;
        F[j] = FLAG_INVALID;
        for (const c of Object.keys(ch)) C[c][j] = NaN;
        j++;
      }
      T[j] = t[i]; Y[j] = y[i]; F[j] = flags[i];
      for (const c of Object.keys(ch)) C[c][j] = ch[c][i];
      j++;
      prev = t[i];
    }
    return { n: m, t: T, y: Y, flags: F, channels: C };
  }

}

/** Number of whole sample slots missing in a step (0 for a regular step or a gap). */
function missing(step: number, dt: number, gapFactor: number): number {
  if (!(step > 1.5 * dt) || step > gapFactor * dt) return 0;
  return Math.round(step / dt) - 1;
}
