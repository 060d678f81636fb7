/**
 * Allan deviations of window results: the series is laid on the step grid
 * (rejected windows and gaps leave holes), and the deviations are SP 1065's
 * overlapping Allan deviation (checked against its worked values in
 * allan-deviation.test.ts) of that series.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { overlappingAllan } from '../../src/analysis/allan-deviation.js';
import { windowStability, type StabilityWindow } from '../../src/analysis/window-stability.js';

const riley = readFileSync(new URL('../fixtures/sp1065/riley_1000pt_frequency.txt', import.meta.url), 'utf8').trim().split('\n').map(Number);
const oadev = (JSON.parse(readFileSync(new URL('../fixtures/sp1065/sp1065_reference.json', import.meta.url), 'utf8')) as { dataset_1000pt: { published: { oadev: number[] } } }).dataset_1000pt.published.oadev;

describe('window stability', () => {
  it('equilibria one step apart are SP 1065 data: the published OADEV at τ = one step, and the kernel at every octave', () => {
    // the 1000-point set as equilibria (rad), windows every 60.1 s whose period slowly drifts by 100 ppm,
    // so the times do not sit on an exact grid: each window still takes its own slot
    const ws: StabilityWindow[] = riley.map((y, i) => ({ t_mid_s: 60.1 * i * (1 + 1e-7 * i), status: 'ok', equilibrium_rad: y, period_s: 60 }));
    const s = windowStability(ws);
    expect(s.step_s).toBeCloseTo(60.1, 1);
    // octave factors (1, 2, 4, …): m = 1 against SP 1065, all of them against the kernel on the plain series
    expect(s.equilibrium.tau_s[0]).toBeCloseTo(s.step_s!, 12);
    expect(Math.abs(s.equilibrium.adev_rad[0] / oadev[0] - 1)).toBeLessThan(6e-7);
    const direct = overlappingAllan(riley, s.step_s!);
    expect(s.equilibrium.adev_rad).toEqual(direct.adev);
    expect(s.equilibrium.n).toEqual(direct.n);
  });

  it('a rejected window and a gap leave holes in the grid; the fractional period is T/median(T) − 1', () => {
    const step = 20;
    const ws: StabilityWindow[] = [];
    const periods = [20, 20.001, 19.999, 20.002, 20, 19.998, 20.001, 20, 20.0005, 19.9995];
    for (let i = 0; i < 10; i++) ws.push({ t_mid_s: 40 + i * step, status: i === 3 ? 'did-not-converge' : 'ok', equilibrium_rad: i === 3 ? null : 1e-6 * i, period_s: i === 3 ? null : periods[i] });
    // a gap of 100 s (5 steps) after the tenth window, then five more
    for (let i = 0; i < 5; i++) ws.push({ t_mid_s: 40 + (14 + i) * step, status: 'ok', equilibrium_rad: 2e-6 * i, period_s: periods[i] });
    const s = windowStability(ws);
    expect(s.step_s).toBe(step);
    const okPeriods = ws.filter((w) => w.status === 'ok').map((w) => w.period_s!).sort((a, b) => a - b);
    const ref = okPeriods[okPeriods.length >> 1];
    expect(s.period_ref_s).toBe(ref);
    // the grid: slots 0…9, then 14…18; slot 3 and 10…13 missing
    const eq = new Array(19).fill(NaN), fp = new Array(19).fill(NaN);
    ws.forEach((w, i) => {
      const slot = i < 10 ? i : 14 + (i - 10);
      if (w.status === 'ok') { eq[slot] = w.equilibrium_rad; fp[slot] = w.period_s! / ref - 1; }
    });
    const a = overlappingAllan(eq, step), b = overlappingAllan(fp, step);
    expect(s.equilibrium.adev_rad).toEqual(a.adev);
    expect(s.equilibrium.n).toEqual(a.n);
    expect(s.period.adev).toEqual(b.adev);
    // m = 4 would need eight valid slots in a row: there are none (slot 3, slots 10–13 missing)
    expect(s.period.tau_s).toEqual([20, 40]);
    expect(b.tau_s).toEqual([20, 40]);
  });

  it('no windows, or a single one: empty deviations and no step', () => {
    expect(windowStability([]).step_s).toBeNull();
    const one = windowStability([{ t_mid_s: 5, status: 'ok', equilibrium_rad: 0, period_s: 10 }]);
    expect(one.equilibrium.tau_s).toEqual([]);
    expect(one.period_ref_s).toBe(10);
  });
});
