import { describe, expect, it } from 'vitest';
import { from, lastValueFrom, toArray } from 'rxjs';
import { TWIST_CAUTION, watchAmplitude } from '../../../pipelines/watch/watch-amplitude.js';
import { simulateWindowSeries } from '../../../bench/watch.js';

describe('watchAmplitude', () => {
  const base = simulateWindowSeries({ seed: 21, hours: 2 });
  it('amplitude-low when the swing decays below min_rad, cleared when it is excited again above 1.25 × min', async () => {
    // free decay τ = 1200 s from 1e-4 rad; re-excited to 1e-4 rad after 1.5 h
    const ws = base.map((w) => ({ ...w, amplitude_rad: w.t_mid_s < 5400 ? 1e-4 * Math.exp(-w.t_mid_s / 1200) : 1e-4 }));
    const inc = await lastValueFrom(from(ws).pipe(watchAmplitude({ min_rad: 1e-5 }), toArray()));
    expect(inc.map((i) => i.state)).toEqual(['raised', 'updated', 'cleared']);
    const raised = inc[0];
    expect(raised.kind).toBe('amplitude-low');
    // crossing at t = 1200·ln 10 ≈ 2763 s: the first window at or past it
    expect(raised.t!).toBeGreaterThanOrEqual(1200 * Math.log(10));
    expect(raised.t! - 1200 * Math.log(10)).toBeLessThanOrEqual(60);
    expect(raised.message).toMatch(/below 1\.00e-5 rad: too small to fit reliably/);
    expect(inc[2].t!).toBeGreaterThan(5400);
  });

  it('amplitude-limit near the twist limit carries the caution; nothing within limits', async () => {
    const ws = base.map((w, i) => ({ ...w, amplitude_rad: i >= 30 && i < 60 ? 0.5 : 0.1 }));
    const inc = await lastValueFrom(from(ws).pipe(watchAmplitude({ min_rad: 1e-5, limit_rad: 0.4 }), toArray()));
    expect(inc.map((i) => [i.kind, i.state])).toEqual([['amplitude-limit', 'raised'], ['amplitude-limit', 'cleared']]);
    expect(inc[0].severity).toBe('alarm');
    expect(inc[0].message).toContain('125 % of the limit 4.00e-1 rad');
    expect(inc[0].message).toContain(TWIST_CAUTION);
    expect(TWIST_CAUTION).toMatch(/permanently set or break the fibre.*drops the suspended mass.*rated load.*catcher.*local codes and licensed practice govern/);
    expect(inc[1].t).toBe(ws[62].t_mid_s);
    const rejected = ws.map((w) => ({ ...w, status: 'no-convergence' }));
    expect(await lastValueFrom(from(rejected).pipe(watchAmplitude({ limit_rad: 0.4 }), toArray()))).toEqual([]);
    const quiet = await lastValueFrom(from(base).pipe(watchAmplitude({ min_rad: 1e-5, limit_rad: 0.4 }), toArray()));
    expect(quiet).toEqual([]);
    expect(() => watchAmplitude({ limit_rad: -1 })).toThrow(/limit_rad must be > 0/);
  });
});
