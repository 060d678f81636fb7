import { describe, expect, it } from 'vitest';
import { cusumInit, cusumOptions, cusumStatistic, cusumStep } from '../../src/analysis/cusum.js';
import { normals } from '../helpers/blocks.js';
import { cusumSeries, siegmundArl0 } from '../helpers/cusum-series.js';


const DELTA = 300e-6;
const SIG = 1e-5;

/** relative period residuals of 4-period windows stepping 1 period around a step at window `at` with phase f in [0, 1) */
function stepSeries(n: number, at: number, stepRel: number, f: number, seed: number) {
  const g = normals(seed);
  const r = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    // window i spans [i, i + 4) in periods; the step happens at at + 3 + f periods, so window `at` is the first to contain it
    const s = at + 3 + f;
    const frac = Math.min(1, Math.max(0, (i + 4 - s) / 4));
    r[i] = stepRel * frac + SIG * g();
  }
  return r;
}

describe('two-sided CUSUM (Page 1954)', () => {
  it('a 500 ppm step is detected within 3 windows of the first window containing it, at any phase, up and down', () => {
    for (const f of [0.001, 0.25, 0.5, 0.75, 0.999]) {
      for (const sign of [1, -1]) {
        const r = stepSeries(80, 40, sign * 500e-6, f, 1);
        const { firstAlarm } = cusumSeries(r, new Float64Array(80).fill(SIG), DELTA);
        expect(firstAlarm).toBeGreaterThanOrEqual(40);
        expect(firstAlarm).toBeLessThanOrEqual(42);
      }
    }
  });

  it('a step of exactly δ is detected within 4 windows; a step of δ/5 never', () => {
    const r = stepSeries(80, 40, 300e-6, 0.001, 2);
    expect(cusumSeries(r, new Float64Array(80).fill(SIG), DELTA).firstAlarm).toBeLessThanOrEqual(43);
    const small = stepSeries(2000, 40, 60e-6, 0.3, 3);
    expect(cusumSeries(small, new Float64Array(2000).fill(SIG), DELTA).firstAlarm).toBe(-1);
  });

  it('one wild window alone does not alarm; two do', () => {
    const r = new Float64Array(50);
    r[20] = 5e-3;
    const sig = new Float64Array(50).fill(SIG);
    expect(cusumSeries(r, sig, DELTA).firstAlarm).toBe(-1);
    r[21] = 5e-3;
    expect(cusumSeries(r, sig, DELTA).firstAlarm).toBe(21);
  });

  it('windows with σ above the floor weigh less', () => {
    const o = cusumOptions();
    const a = cusumStep(cusumInit(), 200e-6, SIG, DELTA, o);
    const b = cusumStep(cusumInit(), 200e-6, 150e-6, DELTA, o);
    expect(a.up).toBeCloseTo(200 / 300 - 0.25, 12);
    expect(b.up).toBeCloseTo((200 / 300 - 0.25) * 0.25, 12); // (0.25/0.5)²
    expect(cusumStatistic(a)).toEqual({ g: a.up, side: 1 });
  });

  it('no false alarm over a week of quiet windows with realistic σ; falls back below 0.7 h soon after a step ends', () => {
    const g = normals(5);
    const n = 7 * 1440;
    const r = Float64Array.from({ length: n }, () => SIG * g());
    expect(cusumSeries(r, new Float64Array(n).fill(SIG), DELTA).firstAlarm).toBe(-1);
    const o = cusumOptions();
    let s = cusumInit();
    for (let i = 0; i < 20; i++) s = cusumStep(s, 600e-6, SIG, DELTA, o);
    expect(s.up).toBe(o.cap);
    let k = 0;
    while (s.up >= 0.7 * o.h) { s = cusumStep(s, 0, SIG, DELTA, o); k++; }
    expect(k).toBeLessThanOrEqual(4);
  });

  it('Siegmund ARL₀ approximation: one-sided k = 0.5, h = 4 gives ≈ 336 (two-sided ≈ 168: D. C. Montgomery, Introduction to Statistical Quality Control, CUSUM ARL table, from memory)', () => {
    expect(siegmundArl0(0.5, 4)).toBeGreaterThan(300);
    expect(siegmundArl0(0.5, 4)).toBeLessThan(360);
    expect(() => cusumOptions({ h: 0 })).toThrow(/h must be > 0/);
  });
});
