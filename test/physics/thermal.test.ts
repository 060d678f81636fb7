import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { K_BOLTZMANN } from '../../src/physics/constants.js';
import { thermalAnglePsd, thermalAngleRms, torqueNoiseStructural, torqueNoiseViscous } from '../../src/physics/thermal.js';
import { parseCodata } from '../fixtures/materials/parse-codata.js';

const codata = parseCodata(readFileSync(new URL('../fixtures/materials/codata2018_excerpt.txt', import.meta.url), 'utf8'));

/** ∫_fmin^∞ S(f) df by substitution f = f0·tan(u) on a fine midpoint grid (handles the resonance and the tail). */
function integrate(S: (f: number) => number, f0: number, fmin = 0, n = 400000): number {
  let sum = 0;
  const u0 = Math.atan(fmin / f0);
  const du = (Math.PI / 2 - u0) / n;
  for (let i = 0; i < n; i++) {
    const u = u0 + (i + 0.5) * du;
    const c = Math.cos(u);
    sum += S(f0 * Math.tan(u)) * f0 / (c * c) * du;
  }
  return sum;
}

describe('thermal noise', () => {
  it('k_B is the exact CODATA value', () => {
    // NIST CODATA 2018 listing (fixture), parsed as scipy parses it
    const k = codata.get('Boltzmann constant')!;
    expect(k.exact).toBe(true);
    expect(k.unit).toBe('J K^-1');
    expect(K_BOLTZMANN).toBe(k.value);
  });
  it('θ_rms = √(k_B T/κ)', () => {
    // tungsten balance, κ = 1e-9 N·m/rad at 295 K: √(4.0729e-21/1e-9) = 2.018 µrad (worked by hand)
    expect(thermalAngleRms(295, 1e-9)).toBeCloseTo(2.0182e-6, 9);
  });
  it('torque noise: structural falls as 1/f and equals viscous at f₀', () => {
    const I = 3.6e-5, kappa = 2.7e-9, Q = 2000, T = 295;
    const w0 = Math.sqrt(kappa / I);
    const f0 = w0 / (2 * Math.PI);
    expect(torqueNoiseStructural(f0, T, kappa, Q)).toBeCloseTo(torqueNoiseViscous(T, I, w0, Q), 35);
    expect(torqueNoiseStructural(f0 / 10, T, kappa, Q) / torqueNoiseStructural(f0, T, kappa, Q)).toBeCloseTo(10, 10);
  });
  // Fluctuation–dissipation / equipartition (standard result): the viscous
  // oscillator's one-sided angle PSD integrates to k_B T/κ exactly.
  it('viscous angle PSD integrates to k_B T/κ', () => {
    const I = 0.036, kappa = 4e-4, Q = 50, T = 293;
    const f0 = Math.sqrt(kappa / I) / (2 * Math.PI);
    const v = integrate((f) => thermalAnglePsd(f, T, I, kappa, Q, 'viscous'), f0);
    expect(v / (K_BOLTZMANN * T / kappa)).toBeCloseTo(1, 4);
  });
  it('structural angle PSD: k_B T/κ in band, with only a 1/Q-small 1/f excess below resonance', () => {
    // the constant-loss-angle model carries a 1/f tail that grows as ln(f0/fmin)/Q;
    // at high Q the in-band variance is the equipartition value
    const I = 3.6e-5, kappa = 2.7e-9, Q = 1e4, T = 295;
    const f0 = Math.sqrt(kappa / I) / (2 * Math.PI);
    const v = integrate((f) => thermalAnglePsd(f, T, I, kappa, Q, 'structural'), f0, f0 / 100);
    expect(Math.abs(v / (K_BOLTZMANN * T / kappa) - 1)).toBeLessThan(1e-3);
    // on resonance both damping laws give the same density
    expect(thermalAnglePsd(f0, T, I, kappa, Q, 'structural') / thermalAnglePsd(f0, T, I, kappa, Q, 'viscous')).toBeCloseTo(1, 6);
  });
});
