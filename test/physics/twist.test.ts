import { describe, expect, it } from 'vitest';
import { lookupMaterial, tensileStrengthAt } from '../../src/physics/materials.js';
import { maxElasticTwist, surfaceShearStrain, surfaceShearStress, twistLimit } from '../../src/physics/twist.js';

const inch = 0.0254;

describe('twist limit', () => {
  it('strain, stress and θ_max are consistent', () => {
    const G = 80e9, d = 1e-3, L = 1;
    const theta = maxElasticTwist(L, 500e6, G, d);
    expect(surfaceShearStress(G, theta, d, L)).toBeCloseTo(500e6, -1);
    expect(surfaceShearStrain(2 * Math.PI, 1e-3, 1)).toBeCloseTo(Math.PI * 1e-3, 15);
  });

  // Classroom-scale example (common practice, no source): 0.025 in piano wire, 2.5 m long.
  describe('0.025 in piano wire, 2.5 m', () => {
    const music = lookupMaterial('music wire')!;
    const fibre = { diameter_m: 0.025 * inch, length_m: 2.5 };
    const lim = twistLimit(fibre, music);
    it('uses the tensile strength interpolated log-log between the 0.010 in and 0.400 in values', () => {
      // SMI Handbook of Spring Design via ODOP table: 370 ksi at 0.010 in, 200 ksi at 0.400 in;
      // log-log interpolation at 0.025 in (by hand): 370·(2.5)^(ln(200/370)/ln 40) ksi ≈ 317.6 ksi ≈ 2190 MPa
      const uts = tensileStrengthAt(music, fibre.diameter_m);
      expect(uts / 1e6).toBeCloseTo(2190, -1);
      // allowable torsional stress 45 % of tensile strength (spring-design practice: common practice, no source)
      expect(lim.allowable_shear_Pa).toBeCloseTo(0.45 * uts, 0);
      expect(lim.basis).toMatch(/45 %/);
    });
    it('ten full turns stay elastic, a hundred do not', () => {
      expect(lim.turns).toBeGreaterThan(10);
      expect(lim.turns).toBeLessThan(100);
      // by hand: θ_max = 2·2.5·985 MPa/(79.29 GPa·0.635 mm) ≈ 98 rad ≈ 15.6 turns
      expect(lim.turns).toBeCloseTo(15.6, 0);
    });
  });

  it('materials without a practice fraction use the documented default, overridable', () => {
    const w = lookupMaterial('W')!;
    const a = twistLimit({ diameter_m: 25e-6, length_m: 0.8 }, w);
    expect(a.basis).toMatch(/assumed default/);
    const b = twistLimit({ diameter_m: 25e-6, length_m: 0.8 }, w, { allowableFraction: 0.2 });
    expect(b.theta_max_rad / a.theta_max_rad).toBeCloseTo(0.5, 12);
  });
});
