/**
 * Report gaps seen in the sample times (after `clean` marked FLAG_AFTER_GAP):
 * a `gap` incident with the missing span. A mark that spans no missing time
 * (at most 1.5 regular steps, or a time that did not advance) is a break, not
 * a gap, and is not reported here. The blocks pass through unchanged.
 */
import type { Observable } from 'rxjs';
import { FLAG_AFTER_GAP, type AngleBlock } from '../src/domain/block.js';
import type { Incident } from '../src/domain/events.js';
import { operate } from './operate.js';

/** Options of gapEvents. */
export interface GapEventsOptions {
  /**
   * true when the jump from `from_s` to `to_s` is a stage restart after a fault (see
   * restart-on-fault.ts): its samples are stored, only not analysed, and the fault's own
   * internal-error event says so — it is not reported again as a gap
   */
  isFaultRestart?: (from_s: number, to_s: number) => boolean;
}

/** @return an operator that taps gaps into `report` */
export function gapEvents(report: (inc: Incident) => void, opts: GapEventsOptions = {}): (source: Observable<AngleBlock>) => Observable<AngleBlock> {
  return (source) =>
    operate<AngleBlock, AngleBlock>(source, (out) => {
      let lastT = NaN;
      // the last regular step between two samples, s: a break no longer than about one step lost no time
      let lastStep = NaN;
      return {
        next(b) {
          // a local copy: a captured double written per sample would be boxed each time
          let step = lastStep;
          // NaN, not undefined, before the first sample: the loop stays on unboxed doubles
          let prev = lastT;
          for (let i = 0; i < b.n; i++) {
            const ti = b.t[i];
            const before = prev;
            prev = ti;
            if (!(b.flags[i] & FLAG_AFTER_GAP)) {
              if (ti > before) step = ti - before;
              continue;
            }
            if (Number.isNaN(before) || opts.isFaultRestart?.(before, ti)) continue;
            const duration_s = ti - before;
            // never a gap of zero or negative length (a repeated or earlier time is a clock fault), and
            // none for a break that lost no time (a device clock step re-timed to the next slot: its
            // clock-note says so)
            if (!(duration_s > 0) || duration_s <= 1.5 * step) continue;
            // whole sample intervals missing, at the regular step before the gap
            const lost = Number.isFinite(step) ? Math.max(0, Math.round(duration_s / step) - 1) : null;
            report({
              kind: 'gap', severity: 'warning', t: before, host_ms: b.host_ms,
              message: `no samples for ${duration_s.toFixed(2)} s (sample times jump${lost === null ? '' : `; about ${lost} samples`})`,
              value: duration_s, data: { duration_s, from: 'sample-times', lost_samples: lost },
            });
          }
          lastStep = step;
          if (b.n) lastT = b.t[b.n - 1];
          out.next(b);
        },
      };
    });
}
