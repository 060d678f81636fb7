/**
 * saturation: the fraction of samples flagged FLAG_SATURATED over a trailing
 * interval of sample time (per block, never per sample emission).
 */
import { Observable } from 'rxjs';
import { FLAG_SATURATED, type AngleBlock } from '../../src/domain/block.js';
import type { Incident } from '../../src/domain/events.js';
import { createAlertState } from './alert-state.js';

/** Options of watchSaturation. */
export interface WatchSaturationOptions {
  /** trailing interval, s of sample time (default 60) */
  interval_s?: number;
  /** fraction of saturated samples that raises (default 0.01) */
  maxFraction?: number;
  /** least time between `updated` incidents, s (default 600) */
  updateEvery_s?: number;
  /** hysteresis (defaults 0.7 and 3 blocks) */
  clearFraction?: number;
  clearAfter?: number;
}

/** Watch a block stream for saturated samples; emits saturation incidents. */
export function watchSaturation(opts: WatchSaturationOptions = {}) {
  const interval = opts.interval_s ?? 60;
  const maxFrac = opts.maxFraction ?? 0.01;
  if (!(interval > 0)) throw new RangeError(`watchSaturation: interval_s must be > 0, got ${interval}`);
  if (!(maxFrac > 0 && maxFrac <= 1)) throw new RangeError(`watchSaturation: maxFraction must be in (0, 1], got ${maxFrac}`);
  return (source: Observable<AngleBlock>) =>
    new Observable<Incident>((sub) => {
      const alert = createAlertState({ kind: 'saturation', severity: 'warning', updateEvery_s: opts.updateEvery_s ?? 600, clearFraction: opts.clearFraction, clearAfter: opts.clearAfter });
      // per-block tallies in a queue: end time, samples, saturated
      const q: { t: number; n: number; sat: number }[] = [];
      let head = 0, n = 0, sat = 0;
      const onBlock = (b: AngleBlock) => {
        if (b.n <= 0) return;
        let k = 0;
        const f = b.flags;
        for (let i = 0; i < b.n; i++) if (f[i] & FLAG_SATURATED) k++;
        const tEnd = b.t[b.n - 1];
        q.push({ t: tEnd, n: b.n, sat: k });
        n += b.n; sat += k;
        while (head < q.length - 1 && q[head].t <= tEnd - interval * (1 - 1e-9)) { n -= q[head].n; sat -= q[head].sat; head++; }
        if (head > 1024) { q.splice(0, head); head = 0; }
        const frac = sat / n;
        const inc = alert.step({
          t: tEnd, stat: frac, statThreshold: maxFrac, value: frac, threshold: maxFrac,
          message: (st) => st === 'cleared'
            ? `saturation down to ${(100 * frac).toFixed(2)} % of samples over the last ${interval} s`
            : `${(100 * frac).toFixed(2)} % of samples saturated over the last ${interval} s (limit ${(100 * maxFrac).toFixed(2)} %): the detector is off its range, those samples are masked`,
          data: { unit: 'fraction', saturated: sat, samples: n, interval_s: interval },
        });
        if (inc) sub.next(inc);
      };
      const s = source.subscribe({
        next: (b) => { try { onBlock(b); } catch (e) { sub.error(e); } },
        error: (e) => sub.error(e),
        complete: () => sub.complete(),
      });
      return () => s.unsubscribe();
    });
}
