/**
 * Amplitude independence, checked against stopwatch timings: a torsion
 * pendulum's period does not depend on how far it swings (the restoring
 * torque is linear in the twist). Hand timings of half periods at swings of
 * 1, 3 and 10 turns, 28.75, 28.5 and 29.2 s, with a reaction time of
 * 0.1–0.2 s at each start and stop (common practice, no source), are
 * compared with the periods the analysis fits on simulated swings of the
 * same sizes.
 */
import { describe, expect, it } from 'vitest';
import { runPipeline } from '../helpers/pipeline-run.js';

const TURN = 2 * Math.PI;
const HALVES_s = [28.75, 28.5, 29.2];
const TURNS = [1, 3, 10];
const REACTION_s = 0.2;
// a balance whose period is what the timings say on average: I = 0.036 kg·m², κ from T = 2·mean(half)
const I = 0.036;
const T_s = (2 * HALVES_s.reduce((a, b) => a + b, 0)) / HALVES_s.length;
const KAPPA = I * ((2 * Math.PI) / T_s) ** 2;

async function fittedPeriod(turns: number, seed: number): Promise<{ period_s: number; sigma_s: number; truth_s: number }> {
  const { windows, truth } = await runPipeline({
    name: `swing-${turns}`, duration_s: 24 * T_s, sample_rate_Hz: 10,
    inertia_kg_m2: I, kappa_Nm_per_rad: KAPPA, q: 800, temperature_K: 295, thermal_noise: true,
    angle_noise_rad: 1e-4, initial: { amplitude_rad: turns * TURN, phase_rad: 0.4 },
  }, { seed, analysis: { window_periods: 4, step_periods: 4 } });
  const ok = windows.filter((w) => w.status === 'ok');
  expect(ok.length).toBeGreaterThanOrEqual(5);
  // the windows do not overlap: the inverse-variance mean and its σ
  let sw = 0, swx = 0;
  for (const w of ok) { const q = 1 / w.period_sigma_s! ** 2; sw += q; swx += q * w.period_s!; }
  return { period_s: swx / sw, sigma_s: 1 / Math.sqrt(sw), truth_s: truth.period_s };
}

describe('the period does not depend on the amplitude', () => {
  it('fitted periods at 1, 3 and 10 turns agree with each other far inside the timing error, and each timing within it', async () => {
    const fits = [];
    for (const [i, turns] of TURNS.entries()) fits.push(await fittedPeriod(turns, 40 + i));
    const timing = 2 * REACTION_s; // one reaction error at start, one at stop
    for (const [i, f] of fits.entries()) {
      // within its σ of the simulated swing's damped period
      expect(Math.abs(f.period_s - f.truth_s)).toBeLessThan(4 * f.sigma_s);
      expect(f.sigma_s).toBeLessThan(1e-3 * timing);
      // a half period timed by hand lies within the timing error of half the fitted period
      expect(Math.abs(HALVES_s[i] - f.period_s / 2)).toBeLessThanOrEqual(timing);
    }
    // tenfold amplitude, same period: the fits agree to their σ, the timings only to the reaction time
    const spread = Math.max(...fits.map((f) => f.period_s)) - Math.min(...fits.map((f) => f.period_s));
    expect(spread).toBeLessThan(6 * Math.max(...fits.map((f) => f.sigma_s)));
    expect(Math.max(...HALVES_s) - Math.min(...HALVES_s)).toBeLessThanOrEqual(2 * timing);
  }, 60_000);
});
