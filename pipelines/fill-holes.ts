/**
 * `fillHoles`: masked placeholders in small holes of the sample grid (see
 * src/analysis/hole-filler.ts), so later stages see uniform sampling.
 */
import type { Observable } from 'rxjs';
import type { AngleBlock } from '../src/domain/block.js';
import { HoleFiller } from '../src/analysis/hole-filler.js';
import { operate } from './operate.js';

/** @return an operator from AngleBlock to AngleBlock with holes filled */
export function fillHoles(): (source: Observable<AngleBlock>) => Observable<AngleBlock> {
  return (source) =>
    operate<AngleBlock, AngleBlock>(source, (out) => {
      const f = new HoleFiller();
      return {
        next(b) {
          const r = f.process(b.t, b.angle, b.flags, b.channels as Record<string, Float64Array | undefined>, b.n);
          out.next(r.n === b.n ? b : { ...b, n: r.n, t: r.t, angle: r.y, flags: r.flags, channels: r.channels });
        },
      };
    });
}
