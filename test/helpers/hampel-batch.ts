/** Test helper: the streaming Hampel detector run over a whole segment. */
import { HAMPEL_PENDING, HAMPEL_SPIKE, HampelDetector, type HampelOptions } from '../../src/analysis/hampel.js';

/**
 * Batch Hampel over one segment (whole arrays, same windows as the streaming
 * detector including the truncated ends): 1 where x[i] is a spike.
 */
export function hampelSpikes(x: Float64Array, usable: Uint8Array | null, opts: HampelOptions): Uint8Array {
  const d = new HampelDetector(opts);
  const out = new Uint8Array(x.length);
  let n = 0;
  for (let i = 0; i < x.length; i++) {
    const r = d.push(x[i], usable ? usable[i] !== 0 : true);
    if (r !== HAMPEL_PENDING) out[n++] = r === HAMPEL_SPIKE ? 1 : 0;
  }
  const tail = new Uint8Array(d.delay + 1);
  const t = d.flush(tail);
  for (let i = 0; i < t; i++) out[n++] = tail[i] === HAMPEL_SPIKE ? 1 : 0;
  return out;
}
