import { Observable, Subject, from } from 'rxjs';
import { describe, expect, it } from 'vitest';
import { blocks, rng } from '../helpers/blocks.js';
import { FLAG_AFTER_GAP, FLAG_SATURATED, FLAG_SPIKE, type AngleBlock } from '../../src/domain/block.js';
import { slidingWindows } from '../../pipelines/window.js';
import type { WindowData } from '../../pipelines/types.js';


function collect(o: Observable<WindowData>): { w: WindowData[]; completed: boolean } {
  const r = { w: [] as WindowData[], completed: false };
  o.subscribe({ next: (w) => r.w.push(w), complete: () => (r.completed = true) });
  return r;
}

/** True when the window spans less than `periods` periods of its period hint (samples 0.5 s apart, as `record` makes them). */
const short = (w: WindowData, periods: number): boolean => w.t_end_s - w.t_start_s < periods * w.periodHint_s - 0.5 - 1e-9;

/** 2 Hz samples of a 10 s swing; optional gap of `gap_s` before sample `gapAt` (marked as clean would). */
function record(N: number, gapAt = -1, gap_s = 0) {
  const t = new Float64Array(N).map((_, i) => i * 0.5 + (gapAt >= 0 && i >= gapAt ? gap_s : 0));
  const y = t.map((v) => 0.01 * Math.cos((2 * Math.PI * v) / 10));
  const flags = new Uint8Array(N);
  if (gapAt >= 0) flags[gapAt] = FLAG_AFTER_GAP;
  return { t, y, flags };
}

describe('slidingWindows', () => {
  it('cuts windows of W periods every S periods, then flushes the open one at completion', () => {
    const r = record(400); // t = 0 … 199.5 s
    const out = collect(from(blocks(r.t, r.y, r.flags, [64])).pipe(slidingWindows({ windowPeriods: 4, stepPeriods: 1, period$: () => 10 })));
    expect(out.completed).toBe(true);
    const full = out.w.filter((w) => !short(w, 4));
    // the window from 160 s holds its 80 samples but no later sample closes it: emitted by the flush at completion
    expect(full.map((w) => w.t_start_s)).toEqual(Array.from({ length: 17 }, (_, k) => 10 * k));
    for (const w of full) {
      expect(w.y.length).toBe(80);
      expect(w.t_end_s).toBe(w.t_start_s + 39.5);
      expect(w.periodHint_s).toBe(10);
      expect(w.mask.every((m) => m === 1)).toBe(true);
      expect(w.y[0]).toBe(r.y[w.t_start_s * 2]);
    }
    expect(out.w.map((w) => w.index)).toEqual(out.w.map((_, i) => i));
    const last = out.w[out.w.length - 1];
    expect(last.t_start_s).toBe(160);
    expect(last.t_end_s).toBe(199.5);
    // the flush emits only the open window: none starts after 160 s
    expect(out.w.length).toBe(17);
  });

  it('gives the same windows whatever the block boundaries', () => {
    const r = record(1000, 520, 33);
    const run = (sizes: number[]) =>
      collect(from(blocks(r.t, r.y, r.flags, sizes)).pipe(slidingWindows({ windowPeriods: 3, stepPeriods: 0.5, period$: () => 9.7 }))).w;
    const ref = run([1000]);
    expect(ref.length).toBeGreaterThan(20);
    const g = rng(4);
    for (let trial = 0; trial < 5; trial++) {
      const sizes = trial === 0 ? [1] : Array.from({ length: 400 }, () => 1 + Math.floor(g() * 90));
      const got = run(sizes);
      expect(got.length).toBe(ref.length);
      for (let k = 0; k < ref.length; k++) {
        expect(got[k].t).toEqual(ref[k].t);
        expect(got[k].y).toEqual(ref[k].y);
        expect(got[k].t_end_s).toBe(ref[k].t_end_s);
      }
    }
  });

  it('never lets a window straddle a gap; the next starts at the sample after it', () => {
    const r = record(500, 200, 30); // 0 … 99.5 s, then 130 … 279.5 s
    const out = collect(from(blocks(r.t, r.y, r.flags, [37])).pipe(slidingWindows({ windowPeriods: 4, stepPeriods: 1, period$: () => 10 }))).w;
    for (const w of out) expect(w.t_end_s < 100 || w.t_start_s >= 130).toBe(true);
    const before = out.filter((w) => w.t_end_s < 100);
    expect(before.map((w) => [w.t_start_s, short(w, 4)])).toEqual([[0, false], [10, false], [20, false], [30, false], [40, false], [50, false], [60, false]]);
    const after = out.filter((w) => w.t_start_s >= 130);
    expect(after[0].t_start_s).toBe(130);
    expect(after[1].t_start_s).toBe(140);
  });

  it('holds the stretch until a period is known, then cuts from its first sample', () => {
    const r = record(400);
    let period: number | undefined;
    const src = new Subject<AngleBlock>();
    const out: WindowData[] = [];
    let completed = false;
    src.pipe(slidingWindows({ windowPeriods: 2, stepPeriods: 2, minPeriods: 1.5, period$: () => period }))
      .subscribe({ next: (w) => out.push(w), complete: () => (completed = true) });
    const bs = blocks(r.t, r.y, r.flags, [25]);
    for (let k = 0; k < 5; k++) src.next(bs[k]); // 62 s held, no period yet
    expect(out).toEqual([]);
    period = 10;
    for (let k = 5; k < bs.length; k++) src.next(bs[k]);
    src.complete();
    expect(completed).toBe(true);
    expect(out[0].t_start_s).toBe(0);
    expect(out.map((w) => w.t_start_s)).toEqual(Array.from({ length: 10 }, (_, k) => 20 * k));
    expect(out.every((w) => !short(w, 2))).toBe(true);
    // the last 20 s lack the sample that closes them: flushed at completion
    expect(out[out.length - 1]).toMatchObject({ t_start_s: 180, t_end_s: 199.5 });
  });

  it('caps memory while no period is known: the oldest samples go', () => {
    const r = record(2000);
    let period: number | undefined;
    const src = new Subject<AngleBlock>();
    const got: WindowData[] = [];
    src.pipe(slidingWindows({ windowPeriods: 4, stepPeriods: 4, period$: () => period, maxSamples: 100 })).subscribe((w) => got.push(w));
    const bs = blocks(r.t, r.y, r.flags, [50]);
    for (let k = 0; k < 30; k++) src.next(bs[k]); // 1500 samples, no period
    expect(got).toEqual([]);
    period = 10;
    for (let k = 30; k < bs.length; k++) src.next(bs[k]);
    // only the last 100 samples before the period arrived were kept: windows begin at sample 1400
    expect(got[0].t_start_s).toBe(1400 * 0.5);
    expect(short(got[0], 4)).toBe(false);
  });

  it('cuts a window short when it would exceed maxSamples, rather than stall', () => {
    const r = record(600);
    const out = collect(from(blocks(r.t, r.y, r.flags, [16])).pipe(slidingWindows({ windowPeriods: 8, stepPeriods: 8, period$: () => 10, maxSamples: 100 }))).w;
    expect(out.length).toBeGreaterThan(0);
    for (const w of out) expect(w.y.length).toBeLessThanOrEqual(116);
    expect(short(out[0], 8)).toBe(true);
  });

  it('masks saturated and spike samples, carries temperature and the running period', () => {
    const r = record(300);
    for (let i = 40; i < 50; i++) r.flags[i] = FLAG_SATURATED;
    r.flags[60] = FLAG_SPIKE;
    const temp = r.t.map((v) => 20 + v / 100);
    let period = 10;
    const src = new Subject<AngleBlock>();
    const got: WindowData[] = [];
    src.pipe(slidingWindows({ windowPeriods: 4, stepPeriods: 2, period$: () => period })).subscribe((w) => got.push(w));
    const bs = blocks(r.t, r.y, r.flags, [100], temp);
    src.next(bs[0]);
    src.next(bs[1]);
    period = 12;
    src.next(bs[2]);
    src.complete();
    const w0 = got[0];
    expect(w0.t_start_s).toBe(0);
    expect(Array.from(w0.mask).flatMap((m, i) => (m ? [] : [i]))).toEqual([40, 41, 42, 43, 44, 45, 46, 47, 48, 49, 60]);
    expect(w0.temp).toEqual(temp.slice(0, 80));
    expect(got.some((w) => w.periodHint_s === 12)).toBe(true);
  });

  it('early unsubscribe tears the source down', () => {
    const src = new Subject<AngleBlock>();
    let n = 0;
    const sub = src.pipe(slidingWindows({ windowPeriods: 1, stepPeriods: 1, period$: () => 1 })).subscribe(() => n++);
    const r = record(40);
    const bs = blocks(r.t, r.y, r.flags, [10]);
    src.next(bs[0]);
    expect(n).toBe(4);
    sub.unsubscribe();
    expect(src.observed).toBe(false);
    src.next(bs[1]);
    expect(n).toBe(4);
  });

  it('rejects bad options naming them', () => {
    expect(() => slidingWindows({ windowPeriods: 0, stepPeriods: 1, period$: () => 1 })).toThrow(/windowPeriods/);
    expect(() => slidingWindows({ windowPeriods: 2, stepPeriods: 3, period$: () => 1 })).toThrow(/stepPeriods/);
    expect(() => slidingWindows({ windowPeriods: 2, stepPeriods: 1, period$: () => 1, maxSamples: 2 })).toThrow(/maxSamples/);
    expect(() => slidingWindows({ windowPeriods: 2, stepPeriods: 1, period$: () => 1, firstIndex: -1 })).toThrow(/firstIndex/);
  });
});
