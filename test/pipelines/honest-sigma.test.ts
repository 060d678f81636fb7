/**
 * Honest window uncertainties across the noise regimes a balance lives in
 * (docs/analysis.md, "Uncertainties"): the virtual balance (thermal torque
 * noise by the fluctuation–dissipation theorem, exact discretisation) through
 * the whole pipeline; the pulls (estimate − truth)/σ of non-overlapping
 * windows must have an SD within 0.85–1.2 for the period, the decay rate and
 * the equilibrium, from readout-limited to thermal-limited balances, Q 100 to
 * 10⁴, swings from 100× to 10⁴× the thermal rms. The full map: `npm run bench -- sigma`.
 */
import { describe, expect, it } from 'vitest';
import { regimePulls, runPipeline, pulls, sd, type RegimeCell } from '../helpers/pipeline-run.js';

const CELLS: (RegimeCell & { name: string })[] = [
  { name: 'thermal-limited, Q 100, swing 100× thermal', q: 100, amplitudeOverThermal: 100, readout_rad: 1e-8 },
  { name: 'readout-limited, Q 100, swing 10⁴× thermal', q: 100, amplitudeOverThermal: 1e4, readout_rad: 3e-6 },
  { name: 'thermal-limited, Q 2000, swing 1000× thermal', q: 2000, amplitudeOverThermal: 1000, readout_rad: 1e-8 },
  { name: 'both, Q 2000, swing 100× thermal', q: 2000, amplitudeOverThermal: 100, readout_rad: 3e-6 },
  { name: 'thermal-limited, Q 10⁴, swing 10⁴× thermal', q: 1e4, amplitudeOverThermal: 1e4, readout_rad: 1e-8 },
  { name: 'readout only (no thermal noise), Q 2000', q: 2000, amplitudeOverThermal: 1000, readout_rad: 1e-6, thermal: false },
];

describe('window σ in every noise regime', () => {
  for (const c of CELLS) {
    it(c.name, async () => {
      const r = await regimePulls(c, 120);
      expect(r.pulls).toBeGreaterThanOrEqual(120);
      for (const [what, v] of [['period', r.period], ['decay rate', r.decay], ['equilibrium', r.equilibrium]] as const) {
        expect(v, what).toBeGreaterThan(0.85);
        expect(v, what).toBeLessThan(1.2);
      }
      // the residuals are as large as readout plus thermal motion predict
      expect(r.chi2_median).toBeGreaterThan(0.75);
      expect(r.chi2_median).toBeLessThan(1.3);
    });
  }

  it('the thermal-noise-limited balance of the review (T ≈ 60 s, Q 2000, readout 1e-8 rad): period pulls were 8.5, are honest now', async () => {
    const I = 1e-5, kappa = I * (2 * Math.PI / 60) ** 2;
    const { windows, truth } = await runPipeline({
      name: 'review', duration_s: 12 * 3600, sample_rate_Hz: 10, inertia_kg_m2: I, kappa_Nm_per_rad: kappa, q: 2000, temperature_K: 295,
      thermal_noise: true, angle_noise_rad: 1e-8, initial: { amplitude_rad: 2e-4 },
    }, { seed: 3 });
    const p = pulls(windows, 'period_s', 'period_sigma_s', truth.period_s, 4);
    expect(p.length).toBeGreaterThan(150);
    expect(sd(p)).toBeGreaterThan(0.85);
    expect(sd(p)).toBeLessThan(1.2);
  });
});
