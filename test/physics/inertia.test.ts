import { describe, expect, it } from 'vitest';
import {
  annulus, cylinderTransverse, discAxial, inertiaFromParts, InertiaPartError, parallelAxis,
  pointMass, rectangularBar, solidSphere, thinRing, thinRod,
} from '../../src/physics/inertia.js';

/** Numerical inertia about the z axis by midpoint integration over a uniform body given by an indicator. */
function numericInertia(inside: (x: number, y: number, z: number) => boolean, half: [number, number, number], n = 80): { m: number; I: number } {
  let m = 0;
  let I = 0;
  const [hx, hy, hz] = half;
  const dx = (2 * hx) / n, dy = (2 * hy) / n, dz = (2 * hz) / n;
  for (let i = 0; i < n; i++) {
    const x = -hx + (i + 0.5) * dx;
    for (let j = 0; j < n; j++) {
      const y = -hy + (j + 0.5) * dy;
      for (let k = 0; k < n; k++) {
        const z = -hz + (k + 0.5) * dz;
        if (inside(x, y, z)) {
          m += 1;
          I += x * x + y * y;
        }
      }
    }
  }
  return { m, I };
}

describe('inertia of bodies about the fibre (z) axis', () => {
  // The closed forms are the textbook table; each is checked here against a
  // direct numerical integral of r⊥² dm over the uniform body (independent of the table).
  it('rectangular bar m(a²+b²)/12', () => {
    const { m, I } = numericInertia((x, y) => Math.abs(x) <= 0.1 && Math.abs(y) <= 0.02, [0.1, 0.02, 0.01], 60);
    expect(rectangularBar(1, 0.2, 0.04)).toBeCloseTo(I / m, 5);
  });
  it('disc about its axis mR²/2 and annulus m(Ri²+Ro²)/2', () => {
    const d = numericInertia((x, y) => x * x + y * y <= 0.01, [0.1, 0.1, 0.01], 100);
    expect(discAxial(1, 0.1)).toBeCloseTo(d.I / d.m, 4);
    const a = numericInertia((x, y) => { const r2 = x * x + y * y; return r2 <= 0.01 && r2 >= 0.0025; }, [0.1, 0.1, 0.01], 100);
    expect(annulus(1, 0.05, 0.1)).toBeCloseTo(a.I / a.m, 4);
    expect(annulus(1, 0, 0.1)).toBe(discAxial(1, 0.1));
    expect(annulus(1, 0.1, 0.1)).toBeCloseTo(thinRing(1, 0.1), 15);
  });
  it('cylinder lying ⟂ fibre m(R²/4 + L²/12)', () => {
    // cylinder axis along x, length 0.2, radius 0.03
    const c = numericInertia((x, y, z) => Math.abs(x) <= 0.1 && y * y + z * z <= 0.0009, [0.1, 0.03, 0.03], 90);
    expect(cylinderTransverse(1, 0.03, 0.2)).toBeCloseTo(c.I / c.m, 5);
  });
  it('sphere 2mR²/5', () => {
    const s = numericInertia((x, y, z) => x * x + y * y + z * z <= 0.0025, [0.05, 0.05, 0.05], 90);
    expect(solidSphere(1, 0.05)).toBeCloseTo(s.I / s.m, 5);
  });
  it('thin rod mL²/12 is the bar with zero width', () => {
    expect(thinRod(0.3, 0.5)).toBeCloseTo(rectangularBar(0.3, 0.5, 0), 15);
  });
  it('parallel axis and parts list', () => {
    expect(parallelAxis(0.01, 2, 0.3)).toBeCloseTo(0.01 + 0.18, 15);
    const I = inertiaFromParts([
      { shape: 'bar', mass_kg: 0.05, offset_m: 0, length_m: 0.1, width_m: 0.01, count: 1 },
      { shape: 'sphere', mass_kg: 0.01, offset_m: 0.04, radius_m: 0.005, count: 2 },
      { shape: 'point', mass_kg: 0.002, offset_m: 0, count: 1 },
    ]);
    const expected = 0.05 * (0.01 + 0.0001) / 12 + 2 * (0.4 * 0.01 * 0.005 ** 2 + 0.01 * 0.04 ** 2);
    expect(I).toBeCloseTo(expected, 15);
    expect(pointMass(0.002, 0)).toBe(0);
  });
  it('a part missing its dimension names the field', () => {
    expect(() => inertiaFromParts([{ shape: 'point', mass_kg: 1, offset_m: 0, count: 1 }, { shape: 'sphere', mass_kg: 1, offset_m: 0, count: 1 }]))
      .toThrow(new InertiaPartError('pendulum.parts[1].radius_m: is required for shape "sphere"', 'pendulum.parts[1].radius_m'));
  });
});
