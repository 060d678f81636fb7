/**
 * period-drift on an anelastic fibre: a quiet free decay moves the period by
 * slope × Δamplitude (here 6 s/rad × 5 mrad = 1000 ppm of 30 s), which is the
 * fibre's nature, not a change of it. Given the fibre's slope (as an earlier run
 * measured it), or once the swing has been re-excited so that the run shows it,
 * the watcher raises nothing — and still catches a step. Scenario invented
 * (test/helpers/configuration-mc.ts); truth from the simulator.
 */
import { describe, expect, it } from 'vitest';
import { from, lastValueFrom, toArray } from 'rxjs';
import type { WindowResult } from '../../../src/domain/window-result.js';
import { watchPeriod, type WatchPeriodOptions } from '../../../pipelines/watch/watch-period.js';
import { anelasticRun } from '../../helpers/configuration-mc.js';

const raised = async (ws: WindowResult[], o: WatchPeriodOptions = {}) =>
  (await lastValueFrom(from(ws).pipe(watchPeriod({ periodChange_ppm: 300, ...o }), toArray()))).filter((i) => i.state === 'raised');

// a knock 20 min in that raises the swing by about 18 % (checked below): the amplitude then moves apart from time
const KICK = { disturbances: [{ t_s: 1200, kick_rad: 2e-3 }] };

describe('period-drift with an anelastic fibre', () => {
  it('a quiet decay raises nothing with the fibre\'s slope given, and does without it', async () => {
    const quiet = await anelasticRun(11);
    expect((await raised(quiet.windows, { correctAmplitude: false })).length).toBeGreaterThan(0);
    // the slope as another run of the same fibre measured it (`fibre` history)
    const earlier = await anelasticRun(12);
    expect(await raised(quiet.windows, { amplitudeSlope_s_per_rad: earlier.slope, amplitudeSlopeSigma_s_per_rad: earlier.sigma })).toEqual([]);
    // a free decay alone cannot tell anelasticity from a drift: nothing is learned from it
    expect((await raised(quiet.windows)).length).toBeGreaterThan(0);
  }, 30_000);

  it('once the swing has been re-excited the slope is learned from the run, and nothing is raised', async () => {
    const run = await anelasticRun(11, KICK);
    const ok = run.windows.filter((w) => w.status === 'ok');
    const before = ok.filter((w) => w.t_end_s < 1200).at(-1)!.amplitude_rad!, after = ok.find((w) => w.t_start_s > 1200)!.amplitude_rad!;
    expect(after / before).toBeGreaterThan(1.15);
    expect((await raised(run.windows, { correctAmplitude: false })).length).toBeGreaterThan(0);
    expect(await raised(run.windows)).toEqual([]);
  }, 30_000);

  it('a 600 ppm step 3 h into the decay is still raised, within 4 windows of it', async () => {
    const run = await anelasticRun(13, { ...KICK, period_steps: [{ t_s: 3 * 3600, ppm: 600 }] });
    const inc = await raised(run.windows);
    expect(inc.length).toBe(1);
    const first = run.windows.find((w) => w.t_end_s >= 3 * 3600)!;
    expect(inc[0].t! - first.t_mid_s).toBeLessThanOrEqual(4 * 30 + 1);
    expect(inc[0].message).toMatch(/swing amplitude removed at 6\.\d+ s\/rad/);
  }, 30_000);
});
