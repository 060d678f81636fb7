import type { Observable } from 'rxjs';
import { FLAG_AFTER_GAP, FLAG_INVALID, FLAG_SATURATED, FLAG_SPIKE, type AngleBlock } from '../src/domain/block.js';
import { BlockBuffer } from '../src/analysis/block-buffer.js';
import { medianInterval } from '../src/analysis/decimate.js';
import { HAMPEL_PENDING, HAMPEL_SPIKE, HampelDetector, checkHampelOptions } from '../src/analysis/hampel.js';
import { operate } from './operate.js';

/** Options of `clean`. */
export interface CleanOptions {
  /** Hampel half-width k, samples (station `analysis.hampel_half_width`, default there 5); 0 disables despiking */
  hampelHalfWidth: number;
  /** Hampel threshold in robust σ (station `analysis.hampel_threshold`, default there 5) */
  hampelThreshold: number;
  /** a time step > gapFactor × the reference interval marks a gap (default 5); a step ≤ 0 masks the sample instead */
  gapFactor?: number;
  /** floor on the Hampel robust σ, radians (default 0); set to the quantisation step for encoders */
  hampelMinScale_rad?: number;
  /** number of leading samples whose median interval is the reference interval (default 64) */
  referenceSamples?: number;
}

/**
 * Mask and mark a stream of angle blocks: non-finite samples, and samples
 * whose time does not advance past the latest one (repeated or earlier: a bad
 * time, never a gap), get FLAG_INVALID,
 * saturated (and invalid) samples are kept with their flags and take no part
 * in despiking, the streaming Hampel filter sets FLAG_SPIKE, and the first
 * sample after a gap gets FLAG_AFTER_GAP (a driver-set FLAG_AFTER_GAP is a gap
 * too). Values are never altered.
 *
 * The reference interval is the median interval of the first
 * `referenceSamples` samples, fixed for the run. Output lags the input by the
 * Hampel half-width k (the decision on a sample needs k later ones) plus the
 * reference samples at the start; completion flushes everything. Output
 * blocks are cut differently from the input, the concatenated samples are the
 * same whatever the input blocks.
 *
 * @example
 * ```ts
 * blocks$.pipe(clean({ hampelHalfWidth: 5, hampelThreshold: 5 }))
 *   .subscribe((b) => console.log(b.n, b.flags));
 * ```
 * @param opts Hampel window and threshold, gap factor
 * @return an operator from AngleBlock to AngleBlock
 */
export function clean(opts: CleanOptions): (source: Observable<AngleBlock>) => Observable<AngleBlock> {
  const h = checkHampelOptions({ halfWidth: opts.hampelHalfWidth, threshold: opts.hampelThreshold, minScale: opts.hampelMinScale_rad });
  const gapFactor = opts.gapFactor ?? 5;
  if (!(gapFactor > 1)) throw new RangeError(`gapFactor: must be > 1 (got ${gapFactor})`);
  const refN = opts.referenceSamples ?? 64;
  if (!Number.isInteger(refN) || refN < 2) throw new RangeError(`referenceSamples: must be an integer ≥ 2 (got ${refN})`);

  return (source) =>
    operate<AngleBlock, AngleBlock>(source, (out) => {
      const buf = new BlockBuffer();
      const hampel = new HampelDetector(h);
      const tail = new Uint8Array(h.halfWidth + 1);
      let refDt: number | undefined;
      let processed = 0; // absolute index of the next sample to examine
      let decided = 0; // absolute index of the next sample awaiting its Hampel decision
      let prevT = NaN;
      let clock: AngleBlock['clock'] = 'host';
      let host_ms = 0;

      const advance = (final: boolean): void => {
        const b = buf;
        if (refDt === undefined) {
          if (b.length < refN && !final) return;
          // no positive interval at all: no gap can be judged by size
          refDt = medianInterval(b.views().t, 0, Math.min(refN, b.length)) ?? Infinity; // exactly the first refN: independent of block cuts
        }
        const limit = gapFactor * refDt;
        const { t, y, flags } = b.views();
        const base = b.start;
        const mark = (codes: Uint8Array, n: number): void => {
          for (let i = 0; i < n; i++) {
            if (codes[i] === HAMPEL_SPIKE) flags[decided - base] |= FLAG_SPIKE;
            decided++;
          }
        };
        for (let a = processed; a < b.end; a++) {
          const o = a - b.start;
          let f = flags[o];
          const ti = t[o];
          if (!Number.isFinite(y[o]) || !Number.isFinite(ti)) f |= FLAG_INVALID;
          let gap = (f & FLAG_AFTER_GAP) !== 0;
          if (Number.isFinite(ti) && Number.isFinite(prevT)) {
            const dt = ti - prevT;
            // a time that does not advance is a bad time, not a gap: the sample is masked and
            // the time axis stays where it was (never a gap of zero or negative length)
            if (!(dt > 0)) f |= FLAG_INVALID;
            else if (dt > limit) gap = true;
          }
          if (gap && a > 0) {
            // no Hampel window may straddle the gap: decide what is left before it
            mark(tail, hampel.flush(tail));
            hampel.reset();
          }
          if (gap) f |= FLAG_AFTER_GAP;
          flags[o] = f;
          if (Number.isFinite(ti) && !(ti <= prevT)) prevT = ti;
          const r = hampel.push(y[o], (f & (FLAG_SATURATED | FLAG_INVALID | FLAG_SPIKE)) === 0);
          if (r !== HAMPEL_PENDING) {
            if (r === HAMPEL_SPIKE) flags[decided - base] |= FLAG_SPIKE;
            decided++;
          }
        }
        processed = b.end;
        if (final) mark(tail, hampel.flush(tail));
        if (decided > b.start) {
          const c = b.copy(b.start, decided);
          b.dropBefore(decided);
          out.next({ n: c.t.length, t: c.t, angle: c.y, flags: c.flags, channels: c.channels, clock, host_ms });
        }
      };

      return {
        next(block) {
          clock = block.clock;
          host_ms = block.host_ms;
          buf.append(block.t, block.angle, block.flags, block.channels, 0, block.n);
          advance(false);
        },
        complete: () => advance(true),
      };
    });
}
