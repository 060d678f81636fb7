import { describe, expect, it } from 'vitest';
import { lookupMaterial, tensileStrengthAt } from '../../src/physics/materials.js';
import { maxElasticTwist, surfaceShearStrain, surfaceShearStress, twistLimit, vonMisesStress } from '../../src/physics/twist.js';
import { breakingMass, suspendedWeight, tensileStress } from '../../src/physics/load.js';

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

  describe('with the load in tension: von Mises √(σ² + 3τ²) (common practice)', () => {
    const w = lookupMaterial('tungsten')!;
    const fibre = { diameter_m: 25e-6, length_m: 0.8 };
    const free = twistLimit(fibre, w);
    it('at θ_max the combined stress of twist and load equals the pure-torsion allowable √3·τ_allow', () => {
      const m = 0.5 * breakingMass(fibre.diameter_m, tensileStrengthAt(w, fibre.diameter_m)); // half the breaking load (common practice)
      const lim = twistLimit(fibre, w, { tension_N: suspendedWeight(m) });
      const sigma = tensileStress(m, fibre.diameter_m);
      expect(lim.tensile_stress_Pa / sigma).toBeCloseTo(1, 12);
      const tau = surfaceShearStress(w.shearModulus.value, lim.theta_max_rad, fibre.diameter_m, fibre.length_m);
      expect(vonMisesStress(sigma, tau) / (Math.sqrt(3) * lim.allowable_shear_Pa)).toBeCloseTo(1, 12);
      // by hand: σ = 0.5·UTS, τ_allow = 0.4·UTS → τ_max = √(0.16 − 0.25/3)·UTS = 0.2769·UTS, 69 % of the free limit
      expect(lim.theta_max_rad / free.theta_max_rad).toBeCloseTo(Math.sqrt(0.16 - 0.25 / 3) / 0.4, 9);
      expect(lim.basis).toMatch(/von Mises/);
    });
    it('no load: the pure-torsion limit; a load that alone reaches the limit leaves no elastic twist', () => {
      expect(twistLimit(fibre, w, { tension_N: 0 }).theta_max_rad).toBe(free.theta_max_rad);
      const over = twistLimit(fibre, w, { tension_N: 2 * suspendedWeight(breakingMass(fibre.diameter_m, tensileStrengthAt(w, fibre.diameter_m))) });
      expect(over.theta_max_rad).toBe(0);
      expect(over.basis).toMatch(/the load alone reaches it/);
    });
  });
});
