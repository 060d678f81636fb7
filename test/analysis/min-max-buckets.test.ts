/**
 * Min/max bucketing against a brute-force reference: for every bucket, a scan
 * of all samples with origin + k·w ≤ t < origin + (k+1)·w (comparisons, not the
 * index formula the implementation uses). Sample times are random, so no
 * sample sits exactly on an edge.
 */
import { describe, expect, it } from 'vitest';
import { MinMaxBuckets, type MinMaxSeries } from '../../src/analysis/min-max-buckets.js';
import { FLAG_INVALID, FLAG_SATURATED } from '../../src/domain/block.js';
import { rng } from '../helpers/blocks.js';

/** Random sorted times over [0, span) with holes, values, and some invalid or non-finite samples. */
function signal(seed: number, n: number, span: number): { t: Float64Array; v: Float64Array; f: Uint8Array } {
  const u = rng(seed);
  const t = Float64Array.from({ length: n }, () => u() * span).sort();
  const v = new Float64Array(n), f = new Uint8Array(n);
  for (let i = 0; i < n; i++) {
    // a hole: nothing between 40 % and 45 % of the span
    if (t[i] > 0.4 * span && t[i] < 0.45 * span) t[i] = 0.4 * span - 1e-6 * u();
    v[i] = Math.sin(t[i] / 7) * 1e-3 + (u() - 0.5) * 1e-5;
    const r = u();
    if (r < 0.01) f[i] = FLAG_INVALID;
    else if (r < 0.02) f[i] = FLAG_SATURATED;
    else if (r < 0.025) v[i] = NaN;
  }
  t.sort();
  return { t, v, f };
}

/** The reference: each bucket scanned over every sample. */
function bruteForce(t: Float64Array, v: Float64Array, f: Uint8Array, origin: number, w: number, n: number): MinMaxSeries {
  const out: MinMaxSeries = { t_s: [], min: [], max: [], count: [] };
  for (let k = 0; k < n; k++) {
    const lo = origin + k * w, hi = origin + (k + 1) * w;
    let mn = Infinity, mx = -Infinity, c = 0;
    for (let i = 0; i < t.length; i++) {
      if (t[i] < lo || t[i] >= hi || f[i] & FLAG_INVALID || !Number.isFinite(v[i])) continue;
      mn = Math.min(mn, v[i]);
      mx = Math.max(mx, v[i]);
      c++;
    }
    if (c > 0) {
      out.t_s.push(lo + w / 2);
      out.min.push(mn);
      out.max.push(mx);
      out.count.push(c);
    }
  }
  return out;
}

/** Feed arrays in blocks of uneven sizes, as chunks arrive from the store. */
function feed(b: MinMaxBuckets, t: Float64Array, v: Float64Array, f: Uint8Array, end_s?: number): void {
  const sizes = [1, 4096, 17, 999, 3];
  for (let i = 0, k = 0; i < t.length; k++) {
    const n = Math.min(sizes[k % sizes.length], t.length - i);
    b.add(t.subarray(i, i + n), v.subarray(i, i + n), f.subarray(i, i + n), end_s);
    i += n;
  }
}

const expectSame = (got: MinMaxSeries, want: MinMaxSeries) => {
  expect(got.count).toEqual(want.count);
  expect(got.min).toEqual(want.min);
  expect(got.max).toEqual(want.max);
  got.t_s.forEach((x, i) => expect(x).toBeCloseTo(want.t_s[i], 9));
};

describe('MinMaxBuckets', () => {
  it('bucketing a range directly equals the brute-force scan (invalid and non-finite left out, saturated kept)', () => {
    const { t, v, f } = signal(1, 20_000, 1000);
    const from = 123.4, to = 876.5, points = 317;
    const w = (to - from) / points;
    const b = new MinMaxBuckets(from, w, points);
    feed(b, t, v, f, to);
    expect(b.length).toBeLessThanOrEqual(points);
    expectSame(b.series(), bruteForce(t, v, f, from, w, points));
  });

  it('a fine grid merged into coarser buckets equals bucketing directly at the merged width', () => {
    const { t, v, f } = signal(2, 50_000, 3600);
    const cell = 2;
    const grid = new MinMaxBuckets(0, cell);
    feed(grid, t, v, f);
    for (const [from, to, points] of [[0, 3600, 100], [100.3, 2000.7, 333], [3000, 3600, 7], [1439, 1441, 1000]] as const) {
      const m = grid.merge(from, to, points);
      expect(m.length).toBeLessThanOrEqual(points);
      // the merged buckets start at the edge of the cell that holds `from`
      const c0 = Math.floor(from / cell);
      expect(m.origin_s).toBe(c0 * cell);
      const cells = Math.ceil(to / cell) - c0;
      expect(m.width_s).toBe(Math.ceil(cells / points) * cell);
      expectSame(m.series(), bruteForce(t, v, f, m.origin_s, m.width_s, Math.ceil(cells / (m.width_s / cell))));
    }
  });

  it('truncate then re-adding the tail, and coarsening, keep the result exact', () => {
    const { t, v, f } = signal(3, 30_000, 600);
    const grid = new MinMaxBuckets(0, 0.5);
    const half = t.findIndex((x) => x >= 300);
    feed(grid, t.subarray(0, half), v.subarray(0, half), f.subarray(0, half));
    // a live run: the last cell may be partial; drop it and add from its start again
    const k = grid.length - 1;
    grid.truncate(k);
    const again = t.findIndex((x) => x >= k * 0.5);
    feed(grid, t.subarray(again), v.subarray(again), f.subarray(again));
    expectSame(grid.series(), bruteForce(t, v, f, 0, 0.5, 1200));
    const coarse = grid.coarsen(4);
    expect(coarse.width_s).toBe(2);
    expectSame(coarse.series(), bruteForce(t, v, f, 0, 2, 300));
    expect(grid.countIn(0, 600)).toBe(bruteForce(t, v, f, 0, 600, 1).count[0]);
  });

  it('refuses a width that is not a finite number > 0', () => {
    expect(() => new MinMaxBuckets(0, 0)).toThrow(/width_s/);
    expect(() => new MinMaxBuckets(0, NaN)).toThrow(/width_s/);
  });
});
