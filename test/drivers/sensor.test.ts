import { describe, expect, it } from 'vitest';
import stdlibErf from '@stdlib/math-base-special-erf';
import { FLAG_INVALID, FLAG_SATURATED, type RawBlock, type ValueRole } from '../../src/domain/block.js';
import { makeConverter } from '../../drivers/sensor.js';
import { beamHalves } from '../helpers/gaussian-beam.js';

function block(channels: Partial<Record<ValueRole, number[]>>): RawBlock {
  const n = Object.values(channels)[0]!.length;
  const ch: Partial<Record<ValueRole, Float64Array>> = {};
  for (const [k, v] of Object.entries(channels)) ch[k as ValueRole] = Float64Array.from(v!);
  return { n, t: new Float64Array(n).map((_, i) => i * 0.1), clock: 'device', host_ms: 42, channels: ch };
}

describe('makeConverter: angle', () => {
  it('passes angle_rad through and flags NaN invalid', () => {
    const conv = makeConverter({ kind: 'angle' });
    const b = block({ angle_rad: [1e-3, NaN, -2e-3] });
    const a = conv(b);
    expect(Array.from(a.angle)).toEqual([1e-3, NaN, -2e-3]);
    expect(Array.from(a.flags)).toEqual([0, FLAG_INVALID, 0]);
    expect(a.t).toBe(b.t);
    expect(a.host_ms).toBe(42);
    expect(a.angle).not.toBe(b.channels.angle_rad); // a copy: later stages may mask in place
  });

  it('names a missing channel', () => {
    expect(() => makeConverter({ kind: 'angle' })(block({ a: [1] }))).toThrow(/no "angle_rad" channel/);
  });
});

describe('makeConverter: encoder', () => {
  it('unwraps a 16-bit counter over ten full turns forward and back', () => {
    const cpr = 50_000; // counts per revolution (quadrature ×4 included)
    const conv = makeConverter({ kind: 'encoder', counts_per_rev: cpr, counter_bits: 16 });
    const truth: number[] = [];
    const raw: number[] = [];
    // ten turns out, then nine back, in steps of 1234 counts (< 2^15)
    for (let c = 0; c <= 10 * cpr; c += 1234) truth.push(c);
    for (let c = truth[truth.length - 1]; c >= cpr; c -= 1234) truth.push(c);
    for (const c of truth) raw.push(c % 65536);
    const angles: number[] = [];
    for (let i = 0; i < raw.length; i += 100) angles.push(...conv(block({ counts: raw.slice(i, i + 100) })).angle);
    expect(angles.length).toBe(truth.length);
    angles.forEach((a, i) => expect(a).toBeCloseTo((2 * Math.PI * truth[i]) / cpr, 12));
    expect(Math.max(...angles) / (2 * Math.PI)).toBeGreaterThan(9.9);
  });

  it('without counter_bits takes the counts as they are', () => {
    const a = makeConverter({ kind: 'encoder', counts_per_rev: 4000 })(block({ counts: [0, 1000, -2000, NaN] }));
    expect(Array.from(a.angle)).toEqual([0, Math.PI / 2, -Math.PI, NaN]);
    expect(a.flags[3]).toBe(FLAG_INVALID);
  });
});

/**
 * erf⁻¹(s) by bisection on @stdlib erf: a reference apart from the converter's
 * own inverse (@stdlib erfinv), since it only ever evaluates the forward function.
 */
function erfinvByBisection(s: number): number {
  let lo = 0;
  let hi = 6;
  for (let k = 0; k < 200 && hi - lo > 0; k++) {
    const mid = (lo + hi) / 2;
    if (mid === lo || mid === hi) break;
    if (stdlibErf(mid) < Math.abs(s)) lo = mid;
    else hi = mid;
  }
  return Math.sign(s) * (lo + hi) / 2;
}

describe('makeConverter: split photodiode', () => {
  const D = 0.8; // lever arm, m
  const w = 1.2e-3; // 1/e² beam radius, m
  const sensor = { kind: 'split-photodiode' as const, lever_arm_m: D, beam_radius_m: w, saturation: 0.98 };

  it('recovers the spot position from halves built with @stdlib erf (the forward model; the converter inverts it)', () => {
    // s = erf(√2·x/w) (Gaussian beam on a split detector), θ = ½·atan(x/D) (optical lever)
    const xs = [-1.2e-3, -4e-4, -1e-6, 0, 3e-7, 2e-4, 9e-4, 1.5e-3];
    const a: number[] = [];
    const b: number[] = [];
    for (const x of xs) {
      const s = stdlibErf((Math.SQRT2 * x) / w);
      a.push(2.5 * (1 + s));
      b.push(2.5 * (1 - s));
    }
    const out = makeConverter(sensor)(block({ a, b }));
    xs.forEach((x, i) => {
      const s = stdlibErf((Math.SQRT2 * x) / w);
      if (Math.abs(s) >= 0.98) {
        expect(out.flags[i]).toBe(FLAG_SATURATED);
        // clipped to the edge of the linear range, with the swing's sign
        const edge = 0.5 * Math.atan(((w / Math.SQRT2) * erfinvByBisection(0.98)) / D);
        expect(out.angle[i]).toBeCloseTo(Math.sign(x) * edge, 15);
      } else {
        expect(out.flags[i]).toBe(0);
        expect(out.angle[i]).toBeCloseTo(0.5 * Math.atan(x / D), 15);
        if (x !== 0) expect(Math.abs(out.angle[i] - 0.5 * Math.atan(x / D)) / Math.abs(0.5 * Math.atan(x / D))).toBeLessThan(1e-10);
      }
    });
    expect(Array.from(out.flags).filter((f) => f === FLAG_SATURATED).length).toBe(1); // 1.5 mm: s ≈ 0.988
  });

  it('matches the Gaussian-beam model integrated numerically over the two halves', () => {
    // the halves of a Gaussian beam of 1/e² radius w centred at x, integrated numerically (test/helpers/gaussian-beam.ts)
    const xs = [-7e-4, -2.5e-4, 1e-5, 3e-4, 8e-4];
    const halves = xs.map((x) => beamHalves(x, w));
    const a = halves.map((h) => h.a);
    const b = halves.map((h) => h.b);
    const out = makeConverter(sensor)(block({ a, b }));
    xs.forEach((x, i) => {
      const theta = 0.5 * Math.atan(x / D);
      expect(Math.abs(out.angle[i] - theta) / Math.abs(theta)).toBeLessThan(1e-8);
    });
  });

  it('masks samples off the split and dark samples as saturated', () => {
    const out = makeConverter(sensor)(block({ a: [1, 0.995, 0, 0, 1], b: [1, 0.005, 0, -1, NaN] }));
    expect(Array.from(out.flags)).toEqual([0, FLAG_SATURATED, FLAG_SATURATED, FLAG_SATURATED, FLAG_INVALID]);
    expect(out.angle[0]).toBe(0);
    expect(out.angle[1]).toBeGreaterThan(0); // off the split on the a side: clipped, positive
    expect(Array.from(out.angle).slice(2).every(Number.isNaN)).toBe(true); // dark: no sign to keep
  });
});

describe('makeConverter: psd', () => {
  const sensor = { kind: 'psd' as const, lever_arm_m: 0.5, half_length_m: 5e-3, saturation: 0.9 };

  it('converts x_m with the optical lever and flags the detector edge', () => {
    const out = makeConverter(sensor)(block({ x_m: [1e-3, -2e-3, 4.6e-3, NaN] }));
    expect(out.angle[0]).toBeCloseTo(0.5 * Math.atan(1e-3 / 0.5), 16);
    expect(out.angle[1]).toBeCloseTo(0.5 * Math.atan(-2e-3 / 0.5), 16);
    expect(Array.from(out.flags)).toEqual([0, 0, FLAG_SATURATED, FLAG_INVALID]);
  });

  it('converts the two electrode currents: x = h·(a − b)/(a + b)', () => {
    const out = makeConverter(sensor)(block({ a: [3, 1, 19.5, 0], b: [1, 1, 0.5, 0] }));
    expect(out.angle[0]).toBeCloseTo(0.5 * Math.atan((5e-3 * 0.5) / 0.5), 16);
    expect(out.angle[1]).toBe(0);
    expect(Array.from(out.flags)).toEqual([0, 0, FLAG_SATURATED, FLAG_SATURATED]);
  });
});
