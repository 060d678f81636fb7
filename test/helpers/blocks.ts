/** Small builders shared by the pipeline tests: seeded numbers and arrays cut into blocks. */
import type { AngleBlock } from '../../src/domain/block.js';
import { Rng } from '../../src/analysis/rng.js';

/** Seeded uniform numbers in [0, 1), from the project's one generator (src/analysis/rng.ts). */
export function rng(seed: number): () => number {
  const r = new Rng(seed);
  return () => r.uniform();
}

/** Seeded standard normal deviates, from the same generator. */
export function normals(seed: number): () => number {
  const r = new Rng(seed);
  return () => r.normal();
}

/** Cut arrays into blocks of the given sizes (the last size repeats); host_ms = hostBase + first index. */
export function blocks(t: Float64Array, y: Float64Array, flags: Uint8Array, sizes: number[], temp?: Float64Array, opts: { clock?: AngleBlock['clock']; hostBase?: number } = {}): AngleBlock[] {
  const out: AngleBlock[] = [];
  let i = 0;
  let k = 0;
  while (i < t.length) {
    const n = Math.min(sizes[Math.min(k++, sizes.length - 1)], t.length - i);
    out.push({
      n, t: t.slice(i, i + n), angle: y.slice(i, i + n), flags: flags.slice(i, i + n),
      channels: temp ? { temp_C: temp.slice(i, i + n) } : {}, clock: opts.clock ?? 'device', host_ms: (opts.hostBase ?? 0) + i,
    });
    i += n;
  }
  return out;
}
