import { describe, expect, it } from 'vitest';
import { from, lastValueFrom, toArray } from 'rxjs';
import { watchPeriod } from '../../../pipelines/watch/watch-period.js';
import { simulateWindowSeries } from '../../../bench/watch.js';
import type { WindowResult } from '../../../src/domain/window-result.js';

const run = (ws: WindowResult[], o = {}) => lastValueFrom(from(ws).pipe(watchPeriod({ periodChange_ppm: 300, ...o }), toArray()));

describe('watchPeriod', () => {
  it('quiet 2-day series with a daily temperature swing moving the period by ~100 ppm raises nothing', async () => {
    const ws = simulateWindowSeries({ seed: 11, hours: 48, temp_swing_K: 2, temp_coef_ppm_per_K: 50, outlier_fraction: 0.005 });
    const ps = ws.map((w) => w.period_s!);
    expect((Math.max(...ps) - Math.min(...ps)) / 60).toBeGreaterThan(90e-6);
    expect(await run(ws)).toEqual([]);
  });

  it('a 500 ppm step is raised within 3 windows of the first window containing it', async () => {
    for (const [seed, tStep] of [[12, 3 * 3600 + 7], [13, 3 * 3600 + 31], [14, 3 * 3600 + 59]] as const) {
      const ws = simulateWindowSeries({ seed, hours: 5, temp_swing_K: 2, period_step: { t_s: tStep, ppm: 500 } });
      const inc = await run(ws);
      const raised = inc.filter((i) => i.state === 'raised');
      expect(raised).toHaveLength(1);
      const first = ws.findIndex((w) => w.t_end_s > tStep);
      const at = ws.findIndex((w) => w.t_mid_s === raised[0].t);
      expect(at - first).toBeGreaterThanOrEqual(0);
      expect(at - first).toBeLessThanOrEqual(2);
      expect(raised[0].kind).toBe('period-drift');
      expect(raised[0].threshold).toBe(300);
      expect(raised[0].message).toMatch(/^period up: \+\d+ ppm from the baseline 60\.\d{6} s \(threshold 300 ppm/);
    }
  });

  it('a step back down clears after the hysteresis, raising once', async () => {
    const up = simulateWindowSeries({ seed: 15, hours: 4, period_step: { t_s: 2 * 3600, ppm: 500 } });
    // undo the step after 3 h
    const ws = up.map((w) => (w.t_start_s >= 3 * 3600 ? { ...w, period_s: w.period_s! / (1 + 500e-6) } : w));
    const inc = await run(ws);
    expect(inc.filter((i) => i.state !== 'updated').map((i) => i.state)).toEqual(['raised', 'cleared']);
    const cleared = inc.find((i) => i.state === 'cleared')!;
    expect(cleared.t! - 3 * 3600).toBeLessThan(15 * 60);
    expect(cleared.severity).toBe('info');
  });

  it('a 400 ppm daily swing cries wolf when the temperature is not removed, and not when it is', async () => {
    const ws = simulateWindowSeries({ seed: 16, hours: 30, temp_swing_K: 4, temp_coef_ppm_per_K: 100 });
    const off = await run(ws, { correctTemperature: false });
    expect(off.some((i) => i.state === 'raised')).toBe(true);
    const on = await run(ws);
    expect(on).toEqual([]);
  });

  it('with no temperature channel, a ±100 ppm daily swing (up to ~200 ppm from a baseline taken near one extreme) does not raise against 300 ppm', async () => {
    for (const phase of [0, Math.PI / 2, Math.PI, -Math.PI / 2]) {
      // 4 K peak to peak × 50 ppm/K = ±100 ppm, at 429 s (one window per period); the thermometer is absent
      const ws = simulateWindowSeries({ seed: 17, hours: 72, period_s: 429, period_sigma_rel: 2e-7, temp_swing_K: 4, temp_coef_ppm_per_K: 50, temp_phase_rad: phase })
        .map((w) => ({ ...w, temp_C: null }));
      const ps = ws.map((w) => w.period_s!);
      expect((Math.max(...ps) - Math.min(...ps)) / 429).toBeGreaterThan(190e-6);
      expect(await run(ws)).toEqual([]);
      // the CUSUM alone (no magnitude gate) would have raised on it
      expect((await run(ws, { raiseFraction: 0 })).some((i) => i.state === 'raised')).toBe(true);
    }
  });

  it('needs the baseline first, skips rejected windows, validates its options', async () => {
    const ws = simulateWindowSeries({ seed: 17, hours: 1, period_step: { t_s: 0, ppm: 1000 } });
    expect(await run(ws.slice(0, 30))).toEqual([]);
    const bad = simulateWindowSeries({ seed: 18, hours: 3, period_step: { t_s: 5400, ppm: 1000 } }).map((w) => (w.t_end_s > 5400 ? { ...w, status: 'too-few-samples', period_s: null } : w));
    expect(await run(bad)).toEqual([]);
    expect(() => watchPeriod({ periodChange_ppm: -1 })).toThrow(/periodChange_ppm must be > 0/);
  });
});
