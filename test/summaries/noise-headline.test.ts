import { describe, expect, it } from 'vitest';
import { noiseHeadline } from '../../src/summaries/noise-headline.js';
import type { WindowResult } from '../../src/domain/window-result.js';
import { normals } from '../helpers/blocks.js';

// CODATA 2018 exact value, typed here from the definition of the kelvin (not read from the code)
const KB = 1.380649e-23;

function windows(n: number, sigmaEq: number, seed: number): WindowResult[] {
  const g = normals(seed);
  return Array.from({ length: n }, (_, i) => ({ t_mid_s: 240 * i, status: 'ok', equilibrium_rad: 1e-4 + sigmaEq * g(), period_s: 60 * (1 + 1e-6 * g()) }) as WindowResult);
}

describe('noise headline of show', () => {
  it('thermal limits: √(k_B·T/κ) and, viscous, √(4·k_B·T·I·ω₀/Q) at the resonance', () => {
    const I = 1e-5, k = I * (2 * Math.PI / 60) ** 2, Q = 2000, T = 295;
    const h = noiseHeadline(windows(50, 1e-8, 1), { kappa_Nm_per_rad: k, q: Q, inertia_kg_m2: I, temperature_K: T, damping: 'viscous' });
    expect(h.thermal_angle_rms_rad! / Math.sqrt((KB * T) / k)).toBeCloseTo(1, 12);
    expect(h.thermal_torque_asd_at_resonance_Nm_per_rtHz! / Math.sqrt((4 * KB * T * I * Math.sqrt(k / I)) / Q)).toBeCloseTo(1, 12);
    // the internal law's 4·k_B·T·κ/(2π·f·Q) equals the viscous one at f₀
    const hi = noiseHeadline(windows(50, 1e-8, 1), { kappa_Nm_per_rad: k, q: Q, inertia_kg_m2: I, temperature_K: T, damping: 'internal' });
    expect(hi.thermal_torque_asd_at_resonance_Nm_per_rtHz! / h.thermal_torque_asd_at_resonance_Nm_per_rtHz!).toBeCloseTo(1, 12);
  });

  it('white equilibria: the floor is at the longest τ with enough terms, about σ/√m there', () => {
    const sigma = 2e-8;
    const h = noiseHeadline(windows(4000, sigma, 2), { kappa_Nm_per_rad: null, q: null, temperature_K: 295, damping: 'internal' });
    expect(h.thermal_angle_rms_rad).toBeNull();
    expect(h.thermal_torque_asd_at_resonance_Nm_per_rtHz).toBeNull();
    const m = h.equilibrium_adev_min_tau_s! / 240;
    expect(m).toBeGreaterThan(100);
    // white noise: σ_A(m·τ₀) = σ/√m (white FM noise, slope τ^−½: NIST SP 1065, section on noise types), within the scatter of few terms at long τ
    expect(h.equilibrium_adev_min_rad! / (sigma / Math.sqrt(m))).toBeGreaterThan(0.4);
    expect(h.equilibrium_adev_min_rad! / (sigma / Math.sqrt(m))).toBeLessThan(1.3);
    expect(h.period_adev_min!).toBeLessThan(1e-6);
  });

  it('too few windows: no floor', () => {
    const h = noiseHeadline(windows(5, 1e-8, 3), { kappa_Nm_per_rad: null, q: null, temperature_K: 295, damping: 'internal' });
    expect(h.equilibrium_adev_min_rad).toBeNull();
    expect(h.period_adev_min).toBeNull();
  });
});
