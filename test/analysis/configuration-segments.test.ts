import { describe, expect, it } from 'vitest';
import { segmentRun, type WindowSpan } from '../../src/analysis/configuration-segments.js';

/** Windows of 4 s stepping 1 s over [0, end] (every one fitted unless listed). */
const windows = (end: number, bad: number[] = []): WindowSpan[] =>
  Array.from({ length: end - 3 }, (_, i) => ({ t_start_s: i, t_end_s: i + 4, ok: !bad.includes(i) }));

describe('segmentRun', () => {
  it('cuts at state changes, keeps out the windows that straddle a change or start while it settles', () => {
    const ws = windows(40, [30]);
    // state 1 until t = 10 (last sample), 2 from t = 10.5; back to 1 from 20.5
    const sg = segmentRun(1, [{ t_prev_s: 10, t_new_s: 10.5, state: 2 }, { t_prev_s: 20, t_new_s: 20.5, state: 1 }], ws, { settle_s: 2, end_s: 40 });
    expect(sg.source).toBe('state');
    expect(sg.labels).toEqual(['1', '2']);
    expect(sg.segments.map((s) => [s.label, s.config, s.from_s, s.to_s])).toEqual([['1', 0, 0, 10], ['2', 1, 10.5, 20], ['1', 0, 20.5, 40]]);
    // window i spans [i, i + 4]: 0 … 6 end by t = 10; 7 … 10 hold both sides of the first change; 11 and 12 start
    // within 2 s after 10.5; 13 … 16 are in segment 2; 17 … 20 straddle the second; 21, 22 settle
    const seg = Array.from(sg.segmentOf);
    expect(seg.slice(0, 7)).toEqual([0, 0, 0, 0, 0, 0, 0]);
    expect(seg.slice(7, 13)).toEqual([-1, -1, -1, -1, -1, -1]);
    expect(seg.slice(13, 17)).toEqual([1, 1, 1, 1]);
    expect(seg.slice(17, 23)).toEqual([-1, -1, -1, -1, -1, -1]);
    expect(seg[23]).toBe(2);
    expect(seg[30]).toBe(-1);
    expect(sg.excluded).toEqual({ rejected: 1, straddling: 8, settling: 4 });
  });

  it('without a state channel the marks are the configurations; before the first mark is "start"', () => {
    const sg = segmentRun(null, [{ t_prev_s: 15, t_new_s: 15, mark: 'near' }, { t_prev_s: 25, t_new_s: 25, mark: 'far' }, { t_prev_s: 32, t_new_s: 32, mark: 'near' }], windows(45), { settle_s: 0, end_s: 45 });
    expect(sg.source).toBe('marks');
    expect(sg.labels).toEqual(['start', 'near', 'far']);
    expect(sg.segments.map((s) => s.config)).toEqual([0, 1, 2, 1]);
    // a window with a sample at the mark's instant (ending or starting there) straddles it
    expect(Array.from(sg.segmentOf.slice(10, 17))).toEqual([0, -1, -1, -1, -1, -1, 1]);
  });

  it('with a state channel a mark only cuts (and names) a segment; a mark inside a change is that change', () => {
    const sg = segmentRun(3, [{ t_prev_s: 10, t_new_s: 11, state: 4 }, { t_prev_s: 10.5, t_new_s: 10.5, mark: 'moved' }, { t_prev_s: 30, t_new_s: 30, mark: 'relevelled' }], windows(50), { settle_s: 0, end_s: 50 });
    expect(sg.source).toBe('state and marks');
    expect(sg.labels).toEqual(['3', '4']);
    expect(sg.segments.map((s) => [s.label, s.mark, s.from_s, s.to_s])).toEqual([['3', null, 0, 10], ['4', 'moved', 11, 30], ['4', 'relevelled', 30, 50]]);
  });

  it('a margin makes a window that ends just before a change count as straddling it (the filter reaches ahead)', () => {
    const ws: WindowSpan[] = [{ t_start_s: 0, t_end_s: 9.9, ok: true }, { t_start_s: 12, t_end_s: 16, ok: true }];
    const ch = [{ t_prev_s: 9.95, t_new_s: 10, state: 2 }];
    expect(Array.from(segmentRun(1, ch, ws, { settle_s: 0, end_s: 20 }).segmentOf)).toEqual([0, 1]);
    expect(Array.from(segmentRun(1, ch, ws, { settle_s: 0, end_s: 20, margin_s: 0.2 }).segmentOf)).toEqual([-1, 1]);
  });

  it('no state and no marks: one configuration, "all"', () => {
    const sg = segmentRun(null, [], windows(10), { settle_s: 3, end_s: 10 });
    expect(sg.source).toBe('none');
    expect(sg.labels).toEqual(['all']);
    expect(Array.from(sg.segmentOf).every((s) => s === 0)).toBe(true);
  });
});
