/** Small builders shared by the pipeline tests: seeded numbers and arrays cut into blocks. */
import type { AngleBlock } from '../../src/domain/block.js';

/** Seeded uniform numbers in [0, 1) (mulberry32). */
export function rng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
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
