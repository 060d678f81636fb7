import { Observable, Subject, from, throwError, concat, of } from 'rxjs';
import { describe, expect, it } from 'vitest';
import { blocks as cutBlocks, rng } from '../helpers/blocks.js';
import { FLAG_AFTER_GAP, FLAG_INVALID, FLAG_SATURATED, FLAG_SPIKE, type AngleBlock } from '../../src/domain/block.js';
import { clean } from '../../pipelines/clean.js';

const blocks = (t: Float64Array, y: Float64Array, flags: Uint8Array, sizes: number[], temp?: Float64Array) => cutBlocks(t, y, flags, sizes, temp, { hostBase: 1000 });

function randomSizes(r: () => number, total: number, max: number): number[] {
  const s: number[] = [];
  for (let sum = 0; sum < total; ) {
    const n = 1 + Math.floor(r() * max);
    s.push(n);
    sum += n;
  }
  return s;
}

/** Subscribe synchronously and join the emitted blocks. */
function collect(o: Observable<AngleBlock>): { t: number[]; y: number[]; f: number[]; temp: number[]; blocks: number; completed: boolean } {
  const r = { t: [] as number[], y: [] as number[], f: [] as number[], temp: [] as number[], blocks: 0, completed: false };
  o.subscribe({
    next(b) {
      expect(b.n).toBeGreaterThan(0);
      expect(b.t.length).toBe(b.n);
      r.blocks++;
      for (let i = 0; i < b.n; i++) {
        r.t.push(b.t[i]);
        r.y.push(b.angle[i]);
        r.f.push(b.flags[i]);
        if (b.channels.temp_C) r.temp.push(b.channels.temp_C[i]);
      }
    },
    complete() {
      r.completed = true;
    },
  });
  return r;
}

/** A 20 Hz record of a 10 s swing with noise, spikes, a saturated stretch and a gap. */
function scenario() {
  const r = rng(3);
  const N = 3000;
  const t = new Float64Array(N);
  const y = new Float64Array(N);
  const flags = new Uint8Array(N);
  const temp = new Float64Array(N);
  for (let i = 0; i < N; i++) {
    t[i] = i * 0.05 + (i >= 1800 ? 4 : 0); // 4 s gap before sample 1800
    y[i] = 0.01 * Math.cos((2 * Math.PI * t[i]) / 10) + 1e-5 * (r() - 0.5);
    temp[i] = 21 + i * 1e-4;
  }
  const spikes = [100, 333, 334, 901, 1500, 1801, 2600];
  for (const i of spikes) y[i] += 0.03; // glitches of a few swing amplitudes
  for (let i = 1200; i < 1260; i++) {
    flags[i] = FLAG_SATURATED;
    y[i] = 0.05; // the detector pinned at its edge
  }
  y[2000] = NaN;
  return { t, y, flags, temp, spikes };
}

describe('clean', () => {
  it('marks spikes, gaps and invalid samples; saturated samples keep their flag and are not despiked', () => {
    const s = scenario();
    const out = collect(from(blocks(s.t, s.y, s.flags, [256], s.temp)).pipe(clean({ hampelHalfWidth: 5, hampelThreshold: 5 })));
    expect(out.completed).toBe(true);
    expect(out.t.length).toBe(s.t.length); // completion flushed the Hampel tail
    expect(out.t).toEqual(Array.from(s.t));
    expect(out.temp).toEqual(Array.from(s.temp));
    const spikes = out.f.flatMap((f, i) => (f & FLAG_SPIKE ? [i] : []));
    expect(spikes).toEqual(s.spikes);
    const gaps = out.f.flatMap((f, i) => (f & FLAG_AFTER_GAP ? [i] : []));
    expect(gaps).toEqual([1800]);
    for (let i = 1200; i < 1260; i++) expect(out.f[i]).toBe(FLAG_SATURATED);
    expect(out.f[1199]).toBe(0);
    expect(out.f[1260]).toBe(0);
    expect(out.f[2000]).toBe(FLAG_INVALID);
    // values are never altered
    expect(out.y.slice(0, 2000)).toEqual(Array.from(s.y.subarray(0, 2000)));
  });

  it('gives the same samples and flags whatever the block boundaries', () => {
    const s = scenario();
    const ref = collect(from(blocks(s.t, s.y, s.flags, [s.t.length])).pipe(clean({ hampelHalfWidth: 4, hampelThreshold: 4 })));
    const r = rng(9);
    for (let trial = 0; trial < 6; trial++) {
      const sizes = trial === 0 ? [1] : randomSizes(r, s.t.length, trial * 150);
      const got = collect(from(blocks(s.t, s.y, s.flags, sizes)).pipe(clean({ hampelHalfWidth: 4, hampelThreshold: 4 })));
      expect(got.f).toEqual(ref.f);
      expect(got.t).toEqual(ref.t);
    }
  });

  it('leaves a clean sine unmarked', () => {
    const N = 5000;
    const t = new Float64Array(N).map((_, i) => i * 0.01);
    const y = t.map((v) => 0.02 * Math.sin(2 * Math.PI * v / 7));
    const out = collect(from(blocks(t, y, new Uint8Array(N), [512])).pipe(clean({ hampelHalfWidth: 5, hampelThreshold: 5 })));
    expect(out.f.every((f) => f === 0)).toBe(true);
  });

  it('masks a time that does not advance (repeated or earlier) instead of calling it a gap, and honours a driver-set gap mark', () => {
    const t = new Float64Array([0, 1, 2, 3, 2.5, 3, 4, 5, 6, 7]);
    const y = new Float64Array(10);
    const flags = new Uint8Array(10);
    flags[7] = FLAG_AFTER_GAP;
    const out = collect(from(blocks(t, y, flags, [3])).pipe(clean({ hampelHalfWidth: 2, hampelThreshold: 3, gapFactor: 5 })));
    expect(out.f.flatMap((f, i) => (f & FLAG_AFTER_GAP ? [i] : []))).toEqual([7]);
    // 2.5 goes back, the 3 after it repeats the latest time: both masked, and the axis goes on from 3
    expect(out.f.flatMap((f, i) => (f & FLAG_INVALID ? [i] : []))).toEqual([4, 5]);
  });

  it('holds back only the Hampel delay once the reference interval is known', () => {
    const src = new Subject<AngleBlock>();
    const seen: number[] = [];
    const sub = src.pipe(clean({ hampelHalfWidth: 5, hampelThreshold: 5, referenceSamples: 16 })).subscribe((b) => seen.push(b.n));
    const N = 100;
    const t = new Float64Array(N).map((_, i) => i);
    const bs = blocks(t, new Float64Array(N), new Uint8Array(N), [10]);
    src.next(bs[0]);
    expect(seen).toEqual([]); // waiting for 16 samples to fix the interval
    src.next(bs[1]);
    expect(seen).toEqual([15]);
    src.next(bs[2]);
    expect(seen).toEqual([15, 10]);
    src.complete();
    expect(seen).toEqual([15, 10, 5]);
    sub.unsubscribe();
  });

  it('early unsubscribe tears the source down and stops emissions', () => {
    let torn = 0;
    let nexts = 0;
    const src = new Subject<AngleBlock>();
    const guarded = new Observable<AngleBlock>((s) => {
      const inner = src.subscribe(s);
      return () => {
        torn++;
        inner.unsubscribe();
      };
    });
    const sub = guarded.pipe(clean({ hampelHalfWidth: 2, hampelThreshold: 3, referenceSamples: 4 })).subscribe(() => nexts++);
    const t = new Float64Array(50).map((_, i) => i);
    const bs = blocks(t, new Float64Array(50), new Uint8Array(50), [10]);
    src.next(bs[0]);
    expect(nexts).toBe(1);
    sub.unsubscribe();
    expect(torn).toBe(1);
    expect(src.observed).toBe(false);
    src.next(bs[1]);
    expect(nexts).toBe(1);
  });

  it('passes a source error on, and rejects bad options', () => {
    let err: unknown;
    concat(of(blocks(new Float64Array([0, 1]), new Float64Array(2), new Uint8Array(2), [2])[0]), throwError(() => new Error('unplugged')))
      .pipe(clean({ hampelHalfWidth: 1, hampelThreshold: 3 }))
      .subscribe({ error: (e) => (err = e) });
    expect((err as Error).message).toBe('unplugged');
    expect(() => clean({ hampelHalfWidth: -1, hampelThreshold: 3 })).toThrow(/hampelHalfWidth/);
    expect(() => clean({ hampelHalfWidth: 3, hampelThreshold: 3, gapFactor: 0.5 })).toThrow(/gapFactor/);
  });
});
