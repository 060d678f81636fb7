import type { Observable } from 'rxjs';
import { FLAG_INVALID, FLAG_SATURATED, FLAG_SPIKE, type AngleBlock } from '../src/domain/block.js';
import { DifferenceNoiseStream } from '../src/analysis/difference-noise.js';
import { BlockBuffer } from '../src/analysis/block-buffer.js';
import { Decimator, medianInterval, type DecimatedSamples } from '../src/analysis/decimate.js';
import { operate } from './operate.js';

const BAD = FLAG_SATURATED | FLAG_SPIKE | FLAG_INVALID;

/** Options of `condition`. */
export interface ConditionOptions {
  /** decimation factor M, integer ≥ 1 (1 = pass the stream through untouched); fixed for the run, see chooseDecimationFactor */
  factor: number;
  /** input sample interval, seconds (default: the median interval of the first `referenceSamples` samples) */
  sampleInterval_s?: number;
  /** Butterworth order of the anti-alias filter, even (default 8) */
  order?: number;
  /** cutoff as a fraction of the output Nyquist frequency (default 0.4) */
  cutoffFraction?: number;
  /** samples used to estimate the interval when not given (default 64) */
  referenceSamples?: number;
}

/**
 * Anti-alias low-pass and decimation by `factor` of a cleaned stream (gaps
 * marked by `clean`, which restart the filter). Output times are corrected
 * for the filter's DC group delay; the other channels (temp_C, …) are
 * sub-sampled at the kept samples without filtering. Flag rules: see
 * src/analysis/decimate.ts. With the interval estimated, output starts once
 * `referenceSamples` samples have arrived; completion flushes them.
 *
 * @example
 * ```ts
 * blocks$.pipe(clean({ hampelHalfWidth: 5, hampelThreshold: 5 }), condition({ factor: 10 }))
 *   .subscribe((b) => console.log(b.n));
 * ```
 * @param opts decimation factor and filter options
 * @return an operator from AngleBlock to AngleBlock
 */
/**
 * The channel in which `condition` hands on the readout noise it measured on
 * the samples before filtering: the variance per input sample, rad², from
 * their 6th differences (difference-noise.ts), averaged over the input
 * samples each kept sample stands for, the same however the stream is cut.
 * After the low-pass the decimated samples no longer show it (the fit's own
 * difference estimate sees only the filter's stop band).
 */
export const READOUT_CHANNEL = 'readout_var_rad2';

/** Per kept sample, the readout variance of the input samples since the previous one (chunk-invariant). */
function readoutVariance(noise: DifferenceNoiseStream, y: Float64Array, flags: Uint8Array, n: number, kept: Int32Array): Float64Array {
  const mask = new Uint8Array(n);
  for (let i = 0; i < n; i++) mask[i] = flags[i] & BAD ? 1 : 0;
  return noise.push(y, mask, n, kept);
}

export function condition(opts: ConditionOptions): (source: Observable<AngleBlock>) => Observable<AngleBlock> {
  const M = opts.factor;
  if (!Number.isInteger(M) || M < 1) throw new RangeError(`factor: must be an integer ≥ 1 (got ${M})`);
  const refN = opts.referenceSamples ?? 64;
  if (!Number.isInteger(refN) || refN < 2) throw new RangeError(`referenceSamples: must be an integer ≥ 2 (got ${refN})`);
  if (opts.sampleInterval_s !== undefined && !(opts.sampleInterval_s > 0)) throw new RangeError(`sampleInterval_s: must be > 0 (got ${opts.sampleInterval_s})`);
  if (M === 1) return (source) => source;
  const make = (dt: number): Decimator => new Decimator({ factor: M, sampleInterval_s: dt, order: opts.order, cutoffFraction: opts.cutoffFraction });
  // fail fast on bad filter options, before any data
  make(opts.sampleInterval_s ?? 1);

  return (source) =>
    operate<AngleBlock, AngleBlock>(source, (out) => {
      let dec: Decimator | null = opts.sampleInterval_s !== undefined ? make(opts.sampleInterval_s) : null;
      let pending: BlockBuffer | null = dec ? null : new BlockBuffer();
      let last: { clock: AngleBlock['clock']; host_ms: number } = { clock: 'host', host_ms: 0 };

      const noise = new DifferenceNoiseStream();
      const emit = (d: DecimatedSamples, channels: Partial<Record<string, Float64Array>>, like: { clock: AngleBlock['clock']; host_ms: number }, readoutVar: Float64Array): void => {
        if (d.n === 0) return;
        const kept: Record<string, Float64Array> = { [READOUT_CHANNEL]: readoutVar };
        for (const [name, v] of Object.entries(channels)) {
          if (!v) continue;
          const c = new Float64Array(d.n);
          for (let i = 0; i < d.n; i++) c[i] = v[d.index[i]];
          kept[name] = c;
        }
        out.next({ n: d.n, t: d.t, angle: d.y, flags: d.flags, channels: kept, clock: like.clock, host_ms: like.host_ms });
      };

      const drainPending = (like: { clock: AngleBlock['clock']; host_ms: number }, final: boolean): void => {
        const p = pending!;
        if (p.length < refN && !final) return;
        const v = p.views();
        const dt = medianInterval(v.t, 0, Math.min(refN, v.t.length)); // exactly the first refN: independent of block cuts
        if (dt === undefined) {
          // fewer than two usable times: nothing to filter, hand on as unusable
          if (p.length > 0) {
            const c = p.copy(p.start, p.end);
            for (let i = 0; i < c.flags.length; i++) c.flags[i] |= FLAG_INVALID;
            out.next({ n: c.t.length, t: c.t, angle: c.y, flags: c.flags, channels: c.channels, ...like });
          }
          pending = null;
          return;
        }
        dec = make(dt);
        const d = dec.process(v.t, v.y, v.flags);
        emit(d, v.channels, like, readoutVariance(noise, v.y, v.flags, v.y.length, d.index));
        pending = null;
      };

      return {
        next(block) {
          last = { clock: block.clock, host_ms: block.host_ms };
          if (dec) {
            const d = dec.process(block.t, block.angle, block.flags, 0, block.n);
            emit(d, block.channels, block, readoutVariance(noise, block.angle, block.flags, block.n, d.index));
          } else if (pending) {
            pending.append(block.t, block.angle, block.flags, block.channels, 0, block.n);
            drainPending(block, false);
          }
        },
        complete() {
          if (pending) drainPending(last, true);
        },
      };
    });
}
