import { describe, expect, it } from 'vitest';
import { median as ssMedian } from 'simple-statistics';
import { median, medianSelect } from '../../src/analysis/median.js';
import { normals } from '../helpers/blocks.js';

describe('median', () => {
  it('by sorting and by selection agree with simple-statistics, odd and even lengths, ties, the first n only', () => {
    const g = normals(9);
    for (const n of [1, 2, 3, 4, 7, 10, 101, 480, 1001]) {
      const xs = Array.from({ length: n }, () => Math.round(g() * 20) / 4); // many ties
      const ref = ssMedian(xs);
      expect(median([...xs])).toBe(ref);
      expect(medianSelect(Float64Array.from(xs))).toBe(ref);
      const padded = Float64Array.from([...xs, 1e9, 1e9, -1e9]);
      expect(medianSelect(padded, n)).toBe(ref);
    }
    expect(medianSelect(new Float64Array(0))).toBeNaN();
  });
});
