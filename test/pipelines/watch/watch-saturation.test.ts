import { describe, expect, it } from 'vitest';
import { from, lastValueFrom, toArray } from 'rxjs';
import { watchSaturation } from '../../../pipelines/watch/watch-saturation.js';
import { FLAG_SATURATED, FLAG_SPIKE, type AngleBlock } from '../../../src/domain/block.js';

/** one-second blocks of 100 samples; `sat` of them saturated */
const blk = (sec: number, sat: number, other = 0): AngleBlock => {
  const n = 100;
  const flags = new Uint8Array(n);
  for (let i = 0; i < sat; i++) flags[i] = FLAG_SATURATED | (i % 2 ? FLAG_SPIKE : 0);
  for (let i = sat; i < sat + other; i++) flags[i] = FLAG_SPIKE;
  return { n, t: Float64Array.from({ length: n }, (_, i) => sec + i / n), clock: 'device', host_ms: 0, channels: {}, angle: new Float64Array(n), flags };
};

describe('watchSaturation', () => {
  it('fraction over a trailing interval raises, and clears once it has rolled out of the interval', async () => {
    const blocks: AngleBlock[] = [];
    for (let s = 0; s < 300; s++) blocks.push(blk(s, s >= 100 && s < 110 ? 50 : 0, 5));
    const inc = await lastValueFrom(from(blocks).pipe(watchSaturation({ interval_s: 60, maxFraction: 0.01 }), toArray()));
    expect(inc.map((i) => i.state)).toEqual(['raised', 'cleared']);
    // 50 saturated in the first bad block out of 60 s × 100 samples = 0.83 % < 1 %; the second makes 1.67 %
    expect(inc[0].t).toBeCloseTo(101.99, 6);
    expect(inc[0].value).toBeCloseTo(100 / 6000, 9);
    expect(inc[0].message).toMatch(/^1\.67 % of samples saturated over the last 60 s \(limit 1\.00 %\)/);
    // the bad stretch leaves the 60-s window at ~170 s; below 0.7 % needs most of it gone; then 3 blocks
    expect(inc[1].t!).toBeGreaterThan(165);
    expect(inc[1].t!).toBeLessThan(175);
    expect(() => watchSaturation({ maxFraction: 2 })).toThrow(/maxFraction must be in \(0, 1\]/);
  });
});
