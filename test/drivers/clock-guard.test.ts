// The clock guard on the five faults seen in the field (one absurd time, a step back, every
// sample twice, a leap that the following samples confirm, a lone leap) and on block cuts.
import { describe, expect, it } from 'vitest';
import { FLAG_AFTER_GAP, FLAG_INVALID, type AngleBlock } from '../../src/domain/block.js';
import type { Incident } from '../../src/domain/events.js';
import { ClockGuard } from '../../drivers/clock-guard.js';
import { blocks, rng } from '../helpers/blocks.js';

const DT = 0.02; // 50 Hz

/** Times i·DT for i < n, then `edit` applied. */
function times(n: number, edit: (t: Float64Array) => void = () => {}): Float64Array {
  const t = new Float64Array(n);
  for (let i = 0; i < n; i++) t[i] = i * DT;
  edit(t);
  return t;
}

/** Run the guard over `t` cut into blocks of `sizes`; join what comes out. */
function guard(t: Float64Array, sizes: number[] = [4096], clock: AngleBlock['clock'] = 'device') {
  const y = new Float64Array(t.length).map((_, i) => i); // the value is the sample's index
  const g = new ClockGuard();
  const out = { t: [] as number[], y: [] as number[], f: [] as number[], faults: [] as number[], incidents: [] as Incident[], same: 0, blocks: 0 };
  const take = (r: ReturnType<ClockGuard['push']>, input?: AngleBlock) => {
    for (const { block, faults } of r.blocks) {
      out.blocks++;
      if (block === input) out.same++;
      expect(block.t.length).toBe(block.n);
      for (let i = 0; i < block.n; i++) {
        out.t.push(block.t[i]);
        out.y.push(block.angle[i]);
        out.f.push(block.flags[i]);
        if (faults?.[i]) out.faults.push(block.angle[i]);
        expect(Boolean(faults?.[i])).toBe((block.flags[i] & FLAG_INVALID) !== 0);
      }
    }
    out.incidents.push(...r.incidents);
  };
  const bs = blocks(t, y, new Uint8Array(t.length), sizes, undefined, { clock });
  for (const b of bs) take(g.push(b), b);
  take(g.flush(1e9));
  return { ...out, stats: g.stats };
}

function increasing(t: number[]): boolean {
  for (let i = 1; i < t.length; i++) if (!(t[i] >= t[i - 1])) return false;
  return true;
}

describe('ClockGuard', () => {
  it('hands normal blocks on untouched, without a copy', () => {
    const t = times(10_000);
    const r = guard(t, [1000]);
    expect(r.t).toEqual(Array.from(t));
    expect(r.faults).toEqual([]);
    expect(r.incidents).toEqual([]);
    expect(r.same).toBeGreaterThanOrEqual(9); // all but the first block (the first sample waits for its confirmation)
  });

  it('one time of 1e308 among 6000 good ones costs that sample only, masked at a placeholder time', () => {
    const t = times(6000, (x) => (x[3000] = 1e308));
    const r = guard(t, [700]);
    expect(r.t.length).toBe(6000);
    expect(r.faults).toEqual([3000]);
    expect(r.t[3000]).toBe(t[2999]); // placeholder: the last good time
    expect(increasing(r.t)).toBe(true);
    const cf = r.incidents.filter((i) => i.kind === 'clock-fault');
    expect(cf).toHaveLength(1);
    expect(cf[0].data).toMatchObject({ count: 1, leap: 1, values: [1e308] });
    expect(cf[0].message).toContain('1e+308');
  });

  it('every sample twice: the second copy of each is masked as repeated, nothing else', () => {
    const n = 3000;
    const t = new Float64Array(2 * n);
    for (let i = 0; i < 2 * n; i++) t[i] = Math.floor(i / 2) * DT;
    const r = guard(t, [333]);
    expect(r.faults.length).toBe(n);
    expect(r.faults.every((i) => i % 2 === 1)).toBe(true);
    expect(r.incidents.every((i) => i.kind === 'clock-fault')).toBe(true);
    const total = r.incidents.reduce((s, i) => s + (i.data!.repeated as number), 0);
    expect(total).toBe(n);
  });

  it('a 2 h step back that the next samples confirm is a clock step: nothing masked, times go on one interval later, FLAG_AFTER_GAP', () => {
    const t = times(6000, (x) => { for (let i = 3000; i < 6000; i++) x[i] -= 7200; });
    const r = guard(t, [512]);
    expect(r.faults).toEqual([]);
    expect(r.t.length).toBe(6000);
    expect(increasing(r.t)).toBe(true);
    expect(r.t[3000]).toBeCloseTo(t[2999] + DT, 9);
    expect(r.t[5999] - r.t[3000]).toBeCloseTo(t[5999] - t[3000], 9); // the stretch after the step keeps its own spacing
    expect(r.f[3000] & FLAG_AFTER_GAP).toBe(FLAG_AFTER_GAP);
    const notes = r.incidents.filter((i) => i.kind === 'clock-note');
    expect(notes).toHaveLength(1);
    expect(notes[0].value).toBeCloseTo(7200 - DT, 6);
    expect(r.stats.steps).toBe(1);
  });

  it('a leap of +10 h that the next samples confirm is a real gap: kept as it is', () => {
    const t = times(6000, (x) => { for (let i = 3000; i < 6000; i++) x[i] += 36_000; });
    const r = guard(t, [512]);
    expect(r.faults).toEqual([]);
    expect(r.t).toEqual(Array.from(t));
    expect(r.incidents).toEqual([]);
  });

  it('a lone leap of +10 h (the clock then goes on as before) is a fault', () => {
    const t = times(6000, (x) => (x[3000] += 36_000));
    const r = guard(t, [512]);
    expect(r.faults).toEqual([3000]);
    expect(r.incidents[0].data).toMatchObject({ leap: 1, values: [t[3000]] });
  });

  it('a lone time going back, NaN and Infinity are masked one by one', () => {
    const t = times(1000, (x) => { x[100] = 1.0; x[200] = NaN; x[300] = Infinity; x[400] = -5; });
    const r = guard(t, [64]);
    expect(r.faults).toEqual([100, 200, 300, 400]);
    const d = r.incidents.reduce((a, i) => ({ b: a.b + (i.data!.backwards as number), n: a.n + (i.data!.not_finite as number) }), { b: 0, n: 0 });
    expect(d).toEqual({ b: 2, n: 2 });
  });

  it('a bad first time has no place on the axis: dropped and counted; the run starts at the first trusted time', () => {
    const t = times(100, (x) => (x[0] = 1e308));
    const r = guard(t, [10]);
    expect(r.t.length).toBe(99);
    expect(r.t[0]).toBe(t[1]);
    expect(r.stats.dropped).toBe(1);
    expect(r.incidents[0].data).toMatchObject({ dropped: 1, values: [1e308] });
  });

  it('gives the same samples whatever the block cuts', () => {
    const t = times(5000, (x) => {
      x[700] = 1e308;
      for (let i = 1500; i < 5000; i++) x[i] -= 100;
      x[2500] = x[2499];
      for (let i = 3500; i < 5000; i++) x[i] += 5000;
    });
    const ref = guard(t, [5000]);
    const r = rng(11);
    for (let k = 0; k < 5; k++) {
      const sizes = Array.from({ length: 400 }, () => 1 + Math.floor(r() * 40));
      const got = guard(t, sizes);
      expect(got.t).toEqual(ref.t);
      expect(got.f).toEqual(ref.f);
      expect(got.faults).toEqual(ref.faults);
    }
    expect(ref.faults).toEqual([700, 2500]);
    expect(increasing(ref.t)).toBe(true);
  });

  it('leaves host-stamped blocks alone', () => {
    const t = times(100, (x) => (x[50] = x[49]));
    const r = guard(t, [10], 'host');
    expect(r.t).toEqual(Array.from(t));
    expect(r.faults).toEqual([]);
  });
});
