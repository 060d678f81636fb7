import { describe, expect, it } from 'vitest';
import { concat, from, lastValueFrom, throwError, toArray } from 'rxjs';
import { watchEquilibrium } from '../../../pipelines/watch/watch-equilibrium.js';
import { simulateWindowSeries } from '../../../bench/watch.js';
import type { WindowResult } from '../../../src/domain/window-result.js';

const THR_H = 5e-6; // rad/h, the station default
const THR = THR_H / 3600;
const run = (ws: WindowResult[], o = {}) => lastValueFrom(from(ws).pipe(watchEquilibrium({ threshold_rad_per_hour: THR_H, ...o }), toArray()));

describe('watchEquilibrium', () => {
  it('quiet 2-day series with a daily temperature swing (period ±50 ppm) and 0.5 % glitch windows raises nothing', async () => {
    const ws = simulateWindowSeries({ seed: 1, hours: 48, temp_swing_K: 2, outlier_fraction: 0.005 });
    expect(ws.length).toBeGreaterThan(2800);
    expect(ws.some((w) => w.temp_C !== null)).toBe(true);
    expect(await run(ws)).toEqual([]);
  });

  it('a log creep starting mid-run at 2× threshold is raised within 3 h of its start, with the creep forecast later', async () => {
    const onset = 6 * 3600 + 1234;
    const tc = 12 * 3600;
    const ws = simulateWindowSeries({ seed: 2, hours: 18, temp_swing_K: 2, creep: { t0_s: onset, a_rad: 2 * THR * tc, t_c_s: tc } });
    const inc = await run(ws);
    const raised = inc.filter((i) => i.state === 'raised');
    expect(raised).toHaveLength(1);
    const delay = raised[0].t! - onset;
    expect(delay).toBeGreaterThan(0);
    expect(delay).toBeLessThan(3 * 3600);
    expect(raised[0].kind).toBe('equilibrium-drift');
    expect(raised[0].threshold).toBeCloseTo(THR, 15);
    expect(raised[0].value!).toBeGreaterThan(THR);
    expect(raised[0].message).toMatch(/^equilibrium drifting at \+\d\.\d\de-\d ± .* rad\/h over the last 1\.0 h \(threshold 5\.00e-6 rad\/h\)/);
    // while it persists: updates every 30 min; the late ones carry the creep fit's forecast.
    // Truth: rate a/(t_c + t − t0) = thr at t = t0 + a/thr − t_c = t0 + 12 h
    const last = inc.filter((i) => i.state === 'updated').at(-1)!;
    const m = /settled in about (\d+(?:\.\d)?) h/.exec(last.message);
    expect(m).not.toBeNull();
    const truthH = (onset + 12 * 3600 - last.t!) / 3600;
    expect(Math.abs(Number(m![1]) - truthH)).toBeLessThan(Math.max(1, 0.3 * truthH));
    expect((last.data as { creep: { forecast_reliable: boolean } }).creep.forecast_reliable).toBe(true);
  });

  it('a long period (429 s: 8 windows an hour) still gets judged: the horizon reaches back to minPoints windows', async () => {
    const onset = 8 * 3600 + 321;
    const tc = 12 * 3600;
    const creep = { t0_s: onset, a_rad: 2 * THR * tc, t_c_s: tc };
    const ws = simulateWindowSeries({ seed: 7, hours: 14, period_s: 429, eq_sigma_rad: 5e-9, creep });
    const raised = (await run(ws)).filter((i) => i.state === 'raised');
    expect(raised).toHaveLength(1);
    expect(raised[0].t! - onset).toBeGreaterThan(0);
    expect(raised[0].t! - onset).toBeLessThan(3 * 3600);
    // the same without the creep: judged, and quiet
    expect(await run(simulateWindowSeries({ seed: 8, hours: 48, period_s: 429, eq_sigma_rad: 5e-9, temp_swing_K: 2 }))).toEqual([]);
  });

  it('clears with hysteresis once a ramp stops, raising only once', async () => {
    const ws = simulateWindowSeries({ seed: 3, hours: 12, ramp: { t0_s: 3 * 3600, t1_s: 6 * 3600, rate_rad_per_s: 3 * THR } });
    const inc = await run(ws);
    const states = inc.filter((i) => i.state !== 'updated').map((i) => i.state);
    expect(states).toEqual(['raised', 'cleared']);
    const cleared = inc.find((i) => i.state === 'cleared')!;
    // the 1-h trailing rate falls below 0.7·thr some 40–60 min after the ramp stops
    expect(cleared.t!).toBeGreaterThan(6 * 3600);
    expect(cleared.t!).toBeLessThan(7.5 * 3600);
    expect(cleared.message).toMatch(/equilibrium drift ended/);
  });

  it('a rate just below the threshold does not raise; rejected windows are skipped', async () => {
    const ws = simulateWindowSeries({ seed: 4, hours: 8, ramp: { t0_s: 0, t1_s: 1e9, rate_rad_per_s: 0.9 * THR } });
    expect(await run(ws)).toEqual([]);
    const bad = simulateWindowSeries({ seed: 5, hours: 8, ramp: { t0_s: 0, t1_s: 1e9, rate_rad_per_s: 3 * THR } }).map((w) => ({ ...w, status: 'no-convergence' }));
    expect(await run(bad)).toEqual([]);
    expect(() => watchEquilibrium({ threshold_rad_per_hour: 0 })).toThrow(/threshold_rad_per_hour must be > 0/);
    // a source error passes through; an early unsubscribe leaves nothing running
    const failing = concat(from(ws.slice(0, 10)), throwError(() => new Error('pipeline broke')));
    await expect(lastValueFrom(failing.pipe(watchEquilibrium({}), toArray()))).rejects.toThrow('pipeline broke');
    const sub = from(ws).pipe(watchEquilibrium({})).subscribe();
    sub.unsubscribe();
    expect(sub.closed).toBe(true);
  });
});
