import type { Observable } from 'rxjs';
import { FLAG_AFTER_GAP, FLAG_INVALID, FLAG_SATURATED, FLAG_SPIKE, type AngleBlock } from '../src/domain/block.js';
import { BlockBuffer } from '../src/analysis/block-buffer.js';
import type { WindowData } from './types.js';
import { READOUT_CHANNEL } from './condition.js';
import { operate } from './operate.js';

/** Options of `slidingWindows`. */
export interface SlidingWindowOptions {
  /** window length in periods (station `analysis.window_periods`) */
  windowPeriods: number;
  /** step between window starts in periods (station `analysis.step_periods`), ≤ windowPeriods */
  stepPeriods: number;
  /** getter of the running period estimate, seconds; undefined while there is none (samples are held meanwhile) */
  period$: () => number | undefined;
  /** index of the first window (default 0): a stage restarted after a fault goes on numbering where the last one stopped */
  firstIndex?: number;
  /** most samples held, waiting for a period or a window end (default 1 048 576); beyond it the oldest go, or a window is cut short */
  maxSamples?: number;
  /** a short window (before a gap, at the end, cut by maxSamples) is emitted when it spans at least this many periods (default min(windowPeriods, 2)) */
  minPeriods?: number;
}

const BAD = FLAG_SATURATED | FLAG_SPIKE | FLAG_INVALID;

/**
 * Cut a cleaned (and conditioned) stream into analysis windows measured in
 * periods: windows of `windowPeriods`·P starting every `stepPeriods`·P, P the
 * running period estimate when each window is cut. A window holds the samples
 * with t in [start, start + windowPeriods·P) and is emitted once a later sample
 * shows it complete, whatever the block boundaries. No window straddles a gap:
 * at FLAG_AFTER_GAP the open window is emitted short (if it spans
 * `minPeriods`) and the next starts at the sample after the gap; completion
 * does the same. Until a period is known, samples of the current stretch are
 * held (at most `maxSamples`, oldest dropped). Samples with a non-finite time
 * are skipped. Memory: samples before the next window start are released.
 *
 * @example
 * ```ts
 * let period: number | undefined;
 * conditioned$.pipe(slidingWindows({ windowPeriods: 4, stepPeriods: 1, period$: () => period }))
 *   .subscribe((w) => console.log(w.index, w.t_start_s, w.y.length));
 * ```
 * @param opts window length and step in periods, period sources, memory cap
 * @return an operator from AngleBlock to WindowData
 */
export function slidingWindows(opts: SlidingWindowOptions): (source: Observable<AngleBlock>) => Observable<WindowData> {
  const W = opts.windowPeriods;
  const S = opts.stepPeriods;
  if (!(W > 0) || !Number.isFinite(W)) throw new RangeError(`windowPeriods: must be > 0 (got ${W})`);
  if (!(S > 0) || !(S <= W)) throw new RangeError(`stepPeriods: must be > 0 and ≤ windowPeriods (got ${S})`);
  const maxSamples = opts.maxSamples ?? 1 << 20;
  if (!Number.isInteger(maxSamples) || maxSamples < 16) throw new RangeError(`maxSamples: must be an integer ≥ 16 (got ${maxSamples})`);
  const minPeriods = opts.minPeriods ?? Math.min(W, 2);
  if (!(minPeriods > 0) || !(minPeriods <= W)) throw new RangeError(`minPeriods: must be > 0 and ≤ windowPeriods (got ${minPeriods})`);
  const firstIndex = opts.firstIndex ?? 0;
  if (!Number.isInteger(firstIndex) || firstIndex < 0) throw new RangeError(`firstIndex: must be an integer ≥ 0 (got ${firstIndex})`);

  return (source) =>
    operate<AngleBlock, WindowData>(source, (out) => {
      const buf = new BlockBuffer();
      let ws: number | undefined; // start time of the open window
      let index = firstIndex;

      const period = (): number | undefined => {
        const p = opts.period$();
        return p !== undefined && p > 0 && Number.isFinite(p) ? p : undefined;
      };

      /** first absolute index with t ≥ time (t increases within a stretch) */
      const lowerBound = (b: BlockBuffer, time: number): number => {
        const t = b.views().t;
        let lo = 0;
        let hi = t.length;
        while (lo < hi) {
          const mid = (lo + hi) >> 1;
          if (t[mid] < time) lo = mid + 1;
          else hi = mid;
        }
        return b.start + lo;
      };

      const emitWindow = (b: BlockBuffer, from: number, to: number, p: number): void => {
        if (to <= from) return;
        const c = b.copy(from, to);
        const mask = new Uint8Array(c.flags.length);
        for (let i = 0; i < mask.length; i++) mask[i] = c.flags[i] & BAD ? 0 : 1;
        const w: WindowData = {
          index: index++,
          t: c.t,
          y: c.y,
          mask,
          t_start_s: c.t[0],
          t_end_s: c.t[c.t.length - 1],
          periodHint_s: p,
        };
        if (c.channels.temp_C) w.temp = c.channels.temp_C;
        if (c.channels[READOUT_CHANNEL]) w.readoutVar = c.channels[READOUT_CHANNEL];
        out.next(w);
      };

      /** Emit every window the held samples complete; keep memory within the cap. */
      const advance = (b: BlockBuffer): void => {
        for (;;) {
          const p = period();
          if (p === undefined) {
            if (b.length > maxSamples) b.dropBefore(b.end - maxSamples);
            return;
          }
          if (b.length === 0) return;
          if (ws === undefined) ws = b.timeAt(b.start);
          const wEnd = ws + W * p;
          const lastT = b.timeAt(b.end - 1);
          const from = lowerBound(b, ws);
          if (lastT >= wEnd) {
            emitWindow(b, from, lowerBound(b, wEnd), p);
          } else if (b.end - from > maxSamples) {
            // the window would hold more than the cap: cut it here, never stall
            emitWindow(b, from, b.end, p);
          } else {
            if (b.length > maxSamples) b.dropBefore(b.end - maxSamples);
            return;
          }
          ws += S * p;
          b.dropBefore(lowerBound(b, ws));
        }
      };

      /** The stretch ends (gap or end of data): emit the open window short, start afresh. */
      const endStretch = (b: BlockBuffer): void => {
        advance(b);
        const p = period();
        if (p !== undefined && ws !== undefined && b.length > 0) {
          const from = lowerBound(b, ws);
          if (from < b.end && b.timeAt(b.end - 1) - b.timeAt(from) >= minPeriods * p) emitWindow(b, from, b.end, p);
        }
        b.clear();
        ws = undefined;
      };

      const appendFinite = (b: BlockBuffer, block: AngleBlock, from: number, to: number): void => {
        let a = from;
        for (let i = from; i < to; i++) {
          if (Number.isFinite(block.t[i])) continue;
          b.append(block.t, block.angle, block.flags, block.channels, a, i);
          a = i + 1;
        }
        b.append(block.t, block.angle, block.flags, block.channels, a, to);
      };

      return {
        next(block) {
          let from = 0;
          for (let i = 0; i < block.n; i++) {
            if (!(block.flags[i] & FLAG_AFTER_GAP)) continue;
            appendFinite(buf, block, from, i);
            if (buf.length > 0) endStretch(buf);
            from = i;
          }
          appendFinite(buf, block, from, block.n);
          advance(buf);
        },
        complete: () => endStretch(buf),
      };
    });
}
