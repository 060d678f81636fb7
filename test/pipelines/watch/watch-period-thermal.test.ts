/**
 * period-drift on a thermal-noise-limited balance, with the honest window σ's
 * (docs/analysis.md, "Uncertainties"): the thermally driven phase walk makes
 * the periods of a decaying swing wander by hundreds of ppm late in a run —
 * within their error bars, and no change of the fibre — while a real step is
 * still caught at once. Measured before the resolution rule: 15 false alarms
 * in 14 quiet days (npm run bench -- watch).
 */
import { describe, expect, it } from 'vitest';
import { from, lastValueFrom, toArray } from 'rxjs';
import { runPipeline } from '../../helpers/pipeline-run.js';
import { watchPeriod } from '../../../pipelines/watch/watch-period.js';

const I = 1e-5;
const balance = { name: 'thermal-limited', sample_rate_Hz: 10, inertia_kg_m2: I, kappa_Nm_per_rad: I * (2 * Math.PI / 60) ** 2, q: 2000, temperature_K: 295, thermal_noise: true, angle_noise_rad: 1e-8, initial: { amplitude_rad: 2e-3 } };

describe('period-drift with thermal noise', () => {
  it('a quiet 4-day run whose swing decays into the noise raises nothing (3 seeds)', async () => {
    for (const seed of [400, 401, 402]) {
      const { windows } = await runPipeline({ ...balance, duration_s: 4 * 86400 }, { seed });
      const inc = await lastValueFrom(from(windows).pipe(watchPeriod({ periodChange_ppm: 300 }), toArray()));
      expect(inc.filter((e) => e.state === 'raised').map((e) => e.message), `seed ${seed}`).toEqual([]);
    }
  });

  it('a 500 ppm step is raised within 4 windows of the first window that holds it', async () => {
    const tStep = 6 * 3600 + 17;
    const { windows } = await runPipeline({ ...balance, duration_s: 9 * 3600, period_steps: [{ t_s: tStep, ppm: 500 }] }, { seed: 9 });
    const inc = await lastValueFrom(from(windows).pipe(watchPeriod({ periodChange_ppm: 300 }), toArray()));
    const raised = inc.find((e) => e.state === 'raised');
    expect(raised).toBeDefined();
    const first = windows.findIndex((w) => w.t_end_s > tStep);
    const at = windows.findIndex((w) => Math.abs(w.t_mid_s - raised!.t!) < 1e-6);
    expect(at - first + 1).toBeLessThanOrEqual(4);
  });
});
