/**
 * Report gaps seen in the sample times (after `clean` marked FLAG_AFTER_GAP):
 * a `gap` incident with the missing span. The blocks pass through unchanged.
 */
import { Observable } from 'rxjs';
import { FLAG_AFTER_GAP, type AngleBlock } from '../src/domain/block.js';
import type { Incident } from '../src/domain/events.js';

/** @return an operator that taps gaps into `report` */
export function gapEvents(report: (inc: Incident) => void): (source: Observable<AngleBlock>) => Observable<AngleBlock> {
  return (source) =>
    new Observable<AngleBlock>((subscriber) => {
      let lastT: number | undefined;
      return source.subscribe({
        next(b) {
          for (let i = 0; i < b.n; i++) {
            if (b.flags[i] & FLAG_AFTER_GAP) {
              const prev = i > 0 ? b.t[i - 1] : lastT;
              if (prev !== undefined) {
                const duration_s = b.t[i] - prev;
                report({
                  kind: 'gap', severity: 'warning', t: prev, host_ms: b.host_ms,
                  message: `no samples for ${duration_s.toFixed(2)} s (sample times jump)`,
                  value: duration_s, data: { duration_s, from: 'sample-times' },
                });
              }
            }
          }
          if (b.n) lastT = b.t[b.n - 1];
          subscriber.next(b);
        },
        error: (e) => subscriber.error(e),
        complete: () => subscriber.complete(),
      });
    });
}
