/**
 * Report gaps seen in the sample times (after `clean` marked FLAG_AFTER_GAP):
 * a `gap` incident with the missing span. The blocks pass through unchanged.
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
      let lastT: number | undefined;
      return {
        next(b) {
          for (let i = 0; i < b.n; i++) {
            if (!(b.flags[i] & FLAG_AFTER_GAP)) continue;
            const prev = i > 0 ? b.t[i - 1] : lastT;
            if (prev === undefined || opts.isFaultRestart?.(prev, b.t[i])) continue;
            const duration_s = b.t[i] - prev;
            report({
              kind: 'gap', severity: 'warning', t: prev, host_ms: b.host_ms,
              message: `no samples for ${duration_s.toFixed(2)} s (sample times jump)`,
              value: duration_s, data: { duration_s, from: 'sample-times' },
            });
          }
          if (b.n) lastT = b.t[b.n - 1];
          out.next(b);
        },
      };
    });
}
