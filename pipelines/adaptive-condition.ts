/**
 * Conditioning whose decimation factor waits for the first period estimate:
 * blocks are held until an FFT over the first stretch gives the period (or the
 * station's `period_guess_s` does), then the factor M is fixed for the run so
 * that about `samplesPerPeriod` samples per period remain, and the held blocks
 * and all later ones go through `condition({ factor: M })`.
 */
import { Subject, type Observable, type Subscription } from 'rxjs';
import { FLAG_INVALID, FLAG_SATURATED, FLAG_SPIKE, type AngleBlock } from '../src/domain/block.js';
import { periodSeed } from '../src/analysis/period-seed.js';
import { chooseDecimationFactor, Decimator, medianInterval } from '../src/analysis/decimate.js';
import { condition } from './condition.js';
import { operate } from './operate.js';

export interface AdaptiveConditionOptions {
  samplesPerPeriod: number;
  /** known period, s: no waiting */
  periodGuess_s?: number;
  /** span of data for the first estimate, s (default 600; doubled while the FFT finds no period) */
  firstEstimate_s?: number;
  /** called once with the first period estimate and the chosen factor */
  onFirstEstimate?: (period_s: number, factor: number) => void;
  /** called once the factor is fixed, with the standard-error scale of fits on the decimated samples (Decimator.whiteNoiseSigmaFactor) */
  onFactor?: (factor: number, sigmaFactor: number) => void;
  /** most samples held while waiting (default 2 000 000): then conditioning starts undecimated */
  maxHeld?: number;
}

const BAD = FLAG_SATURATED | FLAG_SPIKE | FLAG_INVALID;

/** Fewest periods the stretch of a first estimate must hold: fewer, and a harmonic or the noise can pass for the swing. */
export const FIRST_ESTIMATE_MIN_PERIODS = 4;

/**
 * First period estimate of held blocks: FFT seed over the longest gap-free
 * stretch among them (masked samples excluded), searched only up to a
 * quarter of that stretch, so the estimate always rests on at least
 * FIRST_ESTIMATE_MIN_PERIODS cycles; undefined when the stretch is too short.
 */
export function estimatePeriod(blocks: AngleBlock[]): number | undefined {
  let n = 0;
  for (const b of blocks) n += b.n;
  if (n < 64) return undefined;
  const t = new Float64Array(n), y = new Float64Array(n), m = new Uint8Array(n);
  let k = 0;
  for (const b of blocks) {
    t.set(b.t.subarray(0, b.n), k);
    y.set(b.angle.subarray(0, b.n), k);
    for (let i = 0; i < b.n; i++) m[k + i] = b.flags[i] & BAD || !Number.isFinite(b.angle[i]) ? 1 : 0;
    k += b.n;
  }
  // the seed wants one gap-free, uniform stretch: the longest one
  const dt = medianInterval(t);
  if (dt === undefined) return undefined;
  let from = 0, bestFrom = 0, bestTo = n;
  let best = -1;
  for (let i = 1; i <= n; i++) {
    if (i < n && !(t[i] - t[i - 1] > 5 * dt) && t[i] > t[i - 1]) continue;
    if (t[i - 1] - t[from] > best) { best = t[i - 1] - t[from]; bestFrom = from; bestTo = i; }
    from = i;
  }
  if (bestTo - bestFrom < 64) return undefined;
  const span = t[bestTo - 1] - t[bestFrom];
  const s = periodSeed(t.subarray(bestFrom, bestTo), y.subarray(bestFrom, bestTo), { mask: m.subarray(bestFrom, bestTo), maxPeriod_s: span / FIRST_ESTIMATE_MIN_PERIODS });
  return s.ok && span >= FIRST_ESTIMATE_MIN_PERIODS * s.period_s ? s.period_s : undefined;
}

/** Median sample interval of the first (up to 64) held samples, across block boundaries. */
function firstInterval(held: AngleBlock[]): number | undefined {
  const t: number[] = [];
  for (const b of held) {
    for (let i = 0; i < b.n && t.length < 65; i++) t.push(b.t[i]);
    if (t.length >= 65) break;
  }
  return medianInterval(Float64Array.from(t));
}

/** @return an operator from cleaned AngleBlocks to conditioned ones */
export function adaptiveCondition(opts: AdaptiveConditionOptions): (source: Observable<AngleBlock>) => Observable<AngleBlock> {
  return (source) =>
    operate<AngleBlock, AngleBlock>(source, (out) => {
      let inner: Subject<AngleBlock> | null = null;
      let innerSub: Subscription | undefined;
      const held: AngleBlock[] = [];
      let heldN = 0;
      let need_s = opts.firstEstimate_s ?? 600;
      const maxHeld = opts.maxHeld ?? 2_000_000;
      const start = (period: number | undefined): void => {
        const dt = firstInterval(held) ?? 0;
        const factor = period && dt > 0 ? chooseDecimationFactor(period, dt, opts.samplesPerPeriod) : 1;
        if (period) opts.onFirstEstimate?.(period, factor);
        opts.onFactor?.(factor, factor > 1 ? new Decimator({ factor, sampleInterval_s: dt }).whiteNoiseSigmaFactor() : 1);
        inner = new Subject<AngleBlock>();
        // the inner conditioner's errors come out through the same channel as ours
        innerSub = inner.pipe(condition({ factor })).subscribe({ next: (b) => out.next(b), error: (e) => out.error(e) });
        for (const b of held) inner.next(b);
        held.length = 0;
      };
      return {
        next(b) {
          if (inner) return inner.next(b);
          held.push(b);
          heldN += b.n;
          // a known period needs only the sample interval, from the first few dozen samples
          if (opts.periodGuess_s) {
            if (heldN >= 64) start(opts.periodGuess_s);
            return;
          }
          const span = held[held.length - 1].t[b.n - 1] - held[0].t[0];
          if (span >= need_s) {
            const p = estimatePeriod(held);
            if (p !== undefined) return start(p);
            need_s *= 2;
          }
          if (heldN >= maxHeld) start(estimatePeriod(held));
        },
        complete() {
          if (!inner) start(opts.periodGuess_s ?? estimatePeriod(held));
          inner!.complete();
        },
        teardown() {
          innerSub?.unsubscribe();
          held.length = 0;
        },
      };
    });
}
