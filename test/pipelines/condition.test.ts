import { Observable, Subject, from } from 'rxjs';
import { describe, expect, it } from 'vitest';
import { blocks as cutBlocks, rng } from '../helpers/blocks.js';
import { FLAG_AFTER_GAP, FLAG_INVALID, type AngleBlock } from '../../src/domain/block.js';
import { Decimator } from '../../src/analysis/decimate.js';
import { clean } from '../../pipelines/clean.js';
import { condition } from '../../pipelines/condition.js';

const blocks = (t: Float64Array, y: Float64Array, flags: Uint8Array, sizes: number[], temp?: Float64Array) => cutBlocks(t, y, flags, sizes, temp, { clock: 'host' });

function collect(o: Observable<AngleBlock>) {
  const r = { t: [] as number[], y: [] as number[], f: [] as number[], temp: [] as number[], completed: false };
  o.subscribe({
    next(b) {
      for (let i = 0; i < b.n; i++) {
        r.t.push(b.t[i]);
        r.y.push(b.angle[i]);
        r.f.push(b.flags[i]);
        if (b.channels.temp_C) r.temp.push(b.channels.temp_C[i]);
      }
    },
    complete: () => (r.completed = true),
  });
  return r;
}

/** Amplitude of a tone of known frequency: least squares on offset, cos and sin (normal equations, 3×3). */
function toneAmplitude(t: number[], y: number[], use: (i: number) => boolean, f: number): number {
  const w = 2 * Math.PI * f;
  const A = [[0, 0, 0], [0, 0, 0], [0, 0, 0]];
  const b = [0, 0, 0];
  for (let i = 0; i < t.length; i++) {
    if (!use(i)) continue;
    const v = [1, Math.cos(w * t[i]), Math.sin(w * t[i])];
    for (let p = 0; p < 3; p++) {
      b[p] += v[p] * y[i];
      for (let q = 0; q < 3; q++) A[p][q] += v[p] * v[q];
    }
  }
  for (let p = 0; p < 3; p++) for (let q = p + 1; q < 3; q++) {
    const m = A[q][p] / A[p][p];
    for (let s = p; s < 3; s++) A[q][s] -= m * A[p][s];
    b[q] -= m * b[p];
  }
  const x = [0, 0, 0];
  for (let p = 2; p >= 0; p--) {
    let s = b[p];
    for (let q = p + 1; q < 3; q++) s -= A[p][q] * x[q];
    x[p] = s / A[p][p];
  }
  return Math.hypot(x[1], x[2]);
}

describe('condition', () => {
  it('factor 1 passes the very same blocks through', () => {
    const bs = blocks(new Float64Array([0, 1, 2]), new Float64Array(3), new Uint8Array(3), [2]);
    const seen: AngleBlock[] = [];
    from(bs).pipe(condition({ factor: 1 })).subscribe((b) => seen.push(b));
    expect(seen).toEqual(bs);
    expect(seen[0]).toBe(bs[0]);
  });

  it('after clean, keeps a swing\'s amplitude within 1e-4 at 20 samples per output period', () => {
    const dt = 0.02; // 50 Hz
    const M = 25; // 2 Hz out
    const T = 10; // 10 s period → 20 samples per period after decimation
    const N = 60000;
    const t = new Float64Array(N).map((_, i) => i * dt);
    const y = t.map((v) => 1e-3 + 0.004 * Math.cos((2 * Math.PI * v) / T));
    const temp = t.map((v) => 20 + v / 1000);
    const out = collect(from(blocks(t, y, new Uint8Array(N), [4096], temp)).pipe(clean({ hampelHalfWidth: 5, hampelThreshold: 5 }), condition({ factor: M })));
    expect(out.completed).toBe(true);
    expect(out.t.length).toBe(N / M);
    const amp = toneAmplitude(out.t, out.y, (i) => !(out.f[i] & FLAG_INVALID), 1 / T);
    expect(Math.abs(amp / 0.004 - 1)).toBeLessThan(1e-4);
    // temperature is sub-sampled at the kept samples, unfiltered
    expect(out.temp).toEqual(Array.from({ length: N / M }, (_, k) => temp[k * M]));
    // times: kept input times minus the filter's DC group delay
    const gd = new Decimator({ factor: M, sampleInterval_s: dt }).groupDelay_s;
    expect(gd).toBeGreaterThan(0);
    for (let k = 0; k < out.t.length; k += 97) expect(out.t[k]).toBeCloseTo(k * M * dt - gd, 9);
  });

  it('gives the same output whatever the block boundaries, gaps included', () => {
    const r = rng(21);
    const N = 8000;
    const t = new Float64Array(N).map((_, i) => i * 0.1 + (i >= 5000 ? 30 : 0));
    const y = t.map((v) => Math.sin(v / 3) + 0.01 * (r() - 0.5));
    const run = (sizes: number[]) => collect(from(blocks(t, y, new Uint8Array(N), sizes)).pipe(clean({ hampelHalfWidth: 3, hampelThreshold: 5 }), condition({ factor: 8 })));
    const ref = run([N]);
    const gapAt = ref.f.flatMap((f, i) => (f & FLAG_AFTER_GAP ? [i] : []));
    expect(gapAt.length).toBe(1);
    // the first sample after the gap (t = 530 s) is kept, its time less the filter delay
    expect(ref.t[gapAt[0]]).toBeCloseTo(530 - new Decimator({ factor: 8, sampleInterval_s: 0.1 }).groupDelay_s, 9);
    for (let trial = 0; trial < 4; trial++) {
      const sizes: number[] = [];
      for (let s = 0; s < N; ) {
        const n = 1 + Math.floor(r() * 700);
        sizes.push(n);
        s += n;
      }
      const got = run(sizes);
      expect(got.y).toEqual(ref.y);
      expect(got.f).toEqual(ref.f);
      expect(got.t).toEqual(ref.t);
    }
  });

  it('completion flushes a stream shorter than the interval estimate', () => {
    const t = new Float64Array(30).map((_, i) => i);
    const out = collect(from(blocks(t, new Float64Array(30).fill(2), new Uint8Array(30), [7])).pipe(condition({ factor: 3 })));
    expect(out.completed).toBe(true);
    expect(out.t.length).toBe(10);
    // a settled filter on a constant gives the constant back; the early samples are marked as settling
    expect(out.y[9]).toBeCloseTo(2, 12);
    expect(out.f[0] & FLAG_INVALID).toBe(FLAG_INVALID);
  });

  it('with the interval given, emits from the first block; early unsubscribe stops it', () => {
    const src = new Subject<AngleBlock>();
    let got = 0;
    const sub = src.pipe(condition({ factor: 4, sampleInterval_s: 1 })).subscribe((b) => (got += b.n));
    const t = new Float64Array(40).map((_, i) => i);
    const bs = blocks(t, new Float64Array(40), new Uint8Array(40), [8]);
    src.next(bs[0]);
    expect(got).toBe(2);
    sub.unsubscribe();
    expect(src.observed).toBe(false);
    src.next(bs[1]);
    expect(got).toBe(2);
  });

  it('rejects bad options naming them', () => {
    expect(() => condition({ factor: 2.5 })).toThrow(/factor/);
    expect(() => condition({ factor: 2, cutoffFraction: 1.5 })).toThrow(/cutoffFraction/);
    expect(() => condition({ factor: 2, sampleInterval_s: 0 })).toThrow(/sampleInterval_s/);
  });
});
