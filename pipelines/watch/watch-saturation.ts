/**
 * saturation: the fraction of samples flagged FLAG_SATURATED over a trailing
 * interval of sample time (per block, never per sample emission).
 */
import type { Observable } from 'rxjs';
import { FLAG_SATURATED, type AngleBlock } from '../../src/domain/block.js';
import type { Incident } from '../../src/domain/events.js';
import { createAlertState, type AlertTuning } from './alert-state.js';
import { operate } from '../operate.js';

/** Options of watchSaturation (`updateEvery_s` default 600 s; clearAfter counts blocks). */
export interface WatchSaturationOptions extends AlertTuning {
  /** trailing interval, s of sample time (default 60) */
  interval_s?: number;
  /** fraction of saturated samples that raises (default 0.01) */
  maxFraction?: number;
}

/** Watch a block stream for saturated samples; emits saturation incidents. */
export function watchSaturation(opts: WatchSaturationOptions = {}) {
  const interval = opts.interval_s ?? 60;
  const maxFrac = opts.maxFraction ?? 0.01;
  if (!(interval > 0)) throw new RangeError(`watchSaturation: interval_s must be > 0, got ${interval}`);
  if (!(maxFrac > 0 && maxFrac <= 1)) throw new RangeError(`watchSaturation: maxFraction must be in (0, 1], got ${maxFrac}`);
  return (source: Observable<AngleBlock>) =>
    operate<AngleBlock, Incident>(source, (out) => {
      const alert = createAlertState({ kind: 'saturation', severity: 'warning', updateEvery_s: opts.updateEvery_s ?? 600, clearFraction: opts.clearFraction, clearAfter: opts.clearAfter });
      // per-block tallies in a queue: end time, samples, saturated
      const q: { t: number; n: number; sat: number }[] = [];
      let head = 0, n = 0, sat = 0;
      const onBlock = (b: AngleBlock): void => {
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
            ? `saturation down to ${(100 * frac).toFixed(2)} % of samples over the last ${interval} s, below ${(100 * alert.clearFraction * maxFrac).toFixed(2)} % (limit ${(100 * maxFrac).toFixed(2)} %)`
            : `${(100 * frac).toFixed(2)} % of samples saturated over the last ${interval} s (limit ${(100 * maxFrac).toFixed(2)} %): the detector is off its range, those samples are masked`,
          data: { unit: 'fraction', saturated: sat, samples: n, interval_s: interval },
        });
        if (inc) out.next(inc);
      };
      return { next: onBlock };
    });
}
