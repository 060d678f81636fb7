/**
 * The budget's arithmetic on a spectrum made from the formulas themselves
 * (the thermal angle PSD of src/physics/thermal.ts, Saulson 1990, plus a
 * white readout level): the readout floor, the thermal band, the torque
 * referral and the excess come out as the formulas say.
 */
import { describe, expect, it } from 'vitest';
import { torqueNoise } from '../../src/analysis/torque-noise.js';
import type { WelchResult } from '../../src/analysis/welch-psd.js';
import { thermalAnglePsd, thermalTorquePsd, type Damping } from '../../src/physics/thermal.js';
import { kappaFromPeriod } from '../../src/physics/torsion.js';

const I = 1e-4, T0 = 20, Q = 1000, T = 300, fs = 10, N = 1 << 15;
const kappa = kappaFromPeriod(I, T0);

function spectrum(damping: Damping, readout: number): WelchResult {
  const df = fs / N;
  const frequency_Hz = Float64Array.from({ length: N / 2 + 1 }, (_, k) => k * df);
  const psd = Float64Array.from(frequency_Hz, (f) => (f > 0 ? thermalAnglePsd(f, T, I, kappa, Q, damping) : 0) + readout);
  return { frequency_Hz, psd, segments: 1, df_Hz: df };
}

describe('torque noise budget', () => {
  for (const damping of ['internal', 'viscous'] as const) {
    it(`${damping}: a balance at its thermal limit has excess 1 in a band from the bottom to past f₀, and the readout floor given`, () => {
      const R = 1e-20;
      const tn = torqueNoise(spectrum(damping, R), { resonance_Hz: 1 / T0, q: Q, kappa_Nm_per_rad: kappa, inertia_kg_m2: I, temperature_K: T, damping });
      expect(tn.readout_asd_rad_per_rtHz! ** 2 / R).toBeCloseTo(1, 3);
      expect(tn.band_Hz![0]).toBe(tn.frequency_Hz[0]);
      expect(tn.band_Hz![1]).toBeGreaterThan(1 / T0);
      // where the thermal angle PSD equals the readout: a band edge within one band (10^(1/20)) of it
      const edge = tn.frequency_Hz.find((f, i) => f > 1 / T0 && thermalAnglePsd(f, T, I, kappa, Q, damping) < R && i > 0)!;
      expect(tn.band_Hz![1] / edge).toBeGreaterThan(1 / 1.13);
      expect(tn.band_Hz![1] / edge).toBeLessThan(1.13);
      // torque = angle·|χ|⁻¹: the thermal part gives back S_τ; the readout adds √(1 + R/S_θ)
      expect(tn.excess_over_thermal!).toBeGreaterThan(1);
      expect(tn.excess_over_thermal!).toBeLessThan(1.02);
      tn.frequency_Hz.forEach((f, i) => {
        if (f < 0.2 / T0) expect(tn.torque_asd_Nm_per_rtHz![i] / Math.sqrt(thermalTorquePsd(f, T, I, kappa, Q, damping))).toBeCloseTo(1, 2);
        expect(tn.thermal_torque_asd_Nm_per_rtHz![i] / Math.sqrt(thermalTorquePsd(f, T, I, kappa, Q, damping))).toBeCloseTo(1, 2);
      });
      expect(tn.angle_asd_rad_per_rtHz.length).toBe(tn.frequency_Hz.length);
    });
  }

  it('twice the thermal torque noise gives an excess of 2; a readout above the thermal noise everywhere gives no band', () => {
    const s = spectrum('internal', 0);
    for (let k = 0; k < s.psd.length; k++) s.psd[k] *= 4;
    const p = { resonance_Hz: 1 / T0, q: Q, kappa_Nm_per_rad: kappa, inertia_kg_m2: I, temperature_K: T, damping: 'internal' as const };
    // no white floor at all: the "readout" is the thermal tail at high frequency, and the band is all of it
    expect(torqueNoise(s, p).excess_over_thermal!).toBeCloseTo(2, 3);
    const loud = torqueNoise(spectrum('internal', 1e-10), p);
    expect(loud.band_Hz).toBeNull();
    expect(loud.excess_over_thermal).toBeNull();
    expect(loud.thermal_torque_asd_Nm_per_rtHz).not.toBeNull();
  });

  it('without an inertia or a Q the torque-referred parts are null; the angle ASD and the readout remain', () => {
    const s = spectrum('internal', 1e-20);
    const noI = torqueNoise(s, { resonance_Hz: 1 / T0, q: Q, kappa_Nm_per_rad: null, inertia_kg_m2: null, temperature_K: T, damping: 'internal' });
    expect(noI.torque_asd_Nm_per_rtHz).toBeNull();
    expect(noI.thermal_torque_asd_Nm_per_rtHz).toBeNull();
    expect(noI.readout_asd_rad_per_rtHz).not.toBeNull();
    const noQ = torqueNoise(s, { resonance_Hz: 1 / T0, q: null, kappa_Nm_per_rad: kappa, inertia_kg_m2: I, temperature_K: T, damping: 'internal' });
    expect(noQ.torque_asd_Nm_per_rtHz).not.toBeNull();
    expect(noQ.thermal_torque_asd_Nm_per_rtHz).toBeNull();
    expect(noQ.band_Hz).toBeNull();
  });
});
