/**
 * Drift watch end to end: recordings made by the simulator, imported with the
 * built CLI through the same pipeline a live device uses, with the alert
 * thresholds at realistic values (5e-6 rad/h, 300 ppm). A quiet week raises
 * no drift alert; a creep at twice the threshold rate and a 500 ppm period
 * step are raised in time. The balance is the quiet-week scenario's: a 25 µm
 * tungsten fibre, period ≈ 429 s, 1 Hz, so one window per period means about
 * 8 windows an hour (an invented scenario, not a measurement).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { importAndRead, quietWeek, simulateToFile, writeStation, REALISTIC_ALERTS } from './alerts-helpers.js';

let dir: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'fw-alerts-drift-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const THR = REALISTIC_ALERTS.equilibrium_rate_rad_per_hour / 3600; // rad/s
const DRIFT_KINDS = ['equilibrium-drift', 'period-drift'];

describe('drift alerts through simulator file → fibrewatch import', () => {
  it('a quiet 7-day run (daily swing moving the period ~100 ppm, no creep) raises no equilibrium-drift and no period-drift', async () => {
    const sc = quietWeek();
    // the scenario as shipped: 604 800 s at 1 Hz, 1 K daily swing × 1e-4/K = ±100 ppm, a 10-min dropout
    expect(sc.duration_s).toBe(604_800);
    expect(sc.temperature_swing!.amplitude_K * sc.temperature_swing!.period_coefficient_per_K! * 1e6).toBeCloseTo(100, 6);
    const file = await simulateToFile(dir, sc, 11);
    const { events, windows } = await importAndRead(file, writeStation(dir), join(dir, 'quiet.db'));
    // the watchers had a full week of fitted windows to judge (not a vacuous pass)
    const ok = windows.filter((w) => w.status === 'ok');
    expect(ok.length).toBeGreaterThan(1300);
    expect(events.filter((e) => DRIFT_KINDS.includes(e.kind))).toEqual([]);
    // the dropout is still seen: the file's time jump is a gap event
    expect(events.some((e) => e.kind === 'gap')).toBe(true);
  });

  it('without a temperature channel, the same ±100 ppm daily swing still raises no period-drift against 300 ppm (3 days)', async () => {
    const { temperature_channel: _drop, ...rest } = quietWeek();
    const sc = { ...rest, name: 'quiet-no-thermometer', duration_s: 3 * 86400, dropouts: [], output: { format: 'lines' as const, columns: ['t_s', 'angle_rad'] } };
    const file = await simulateToFile(dir, sc, 14);
    const station = writeStation(dir, {}, 'no-thermometer.json', { columns: ['t_s', 'angle_rad'] });
    const { events, windows } = await importAndRead(file, station, join(dir, 'quiet-no-thermometer.db'));
    const ok = windows.filter((w) => w.status === 'ok') as (typeof windows[number] & { period_s: number; temp_C: number | null })[];
    expect(ok.length).toBeGreaterThan(550);
    expect(ok.every((w) => w.temp_C === null)).toBe(true);
    // the swing is there, uncorrected: about 200 ppm peak to peak
    const ps = ok.map((w) => w.period_s);
    const mid = [...ps].sort((a, b) => a - b)[ps.length >> 1];
    expect((Math.max(...ps) - Math.min(...ps)) / mid).toBeGreaterThan(180e-6);
    expect(events.filter((e) => DRIFT_KINDS.includes(e.kind))).toEqual([]);
  });

  it('a creep starting mid-run at 2× the threshold rate is raised within 3 h of its start', async () => {
    const start = 10 * 3600 + 777;
    const tc = 12 * 3600;
    // θ_eq = a·ln(1 + (t − start)/t_c): initial rate a/t_c = 2 × threshold
    const sc = { ...quietWeek(), name: 'creep-mid', duration_s: 20 * 3600, dropouts: [], creep: { a_rad: 2 * THR * tc, tc_s: tc, start_s: start } };
    const file = await simulateToFile(dir, sc, 12);
    const { events } = await importAndRead(file, writeStation(dir), join(dir, 'creep.db'));
    const eq = events.filter((e) => e.kind === 'equilibrium-drift');
    const raised = eq.filter((e) => e.state === 'raised');
    expect(raised).toHaveLength(1);
    const delay = raised[0].t_s - start;
    expect(delay).toBeGreaterThan(0);
    expect(delay).toBeLessThan(3 * 3600);
    // the reported rate is the creep's, positive, above the threshold and no more than its initial 2×
    expect(raised[0].value!).toBeGreaterThan(THR);
    expect(raised[0].value!).toBeLessThan(2.2 * THR);
    expect(raised[0].threshold!).toBeCloseTo(THR, 15);
    // t is ISO UTC on the run's time base: started_at + t_s
    expect(Date.parse(raised[0].t)).toBeCloseTo(Date.parse('2026-03-02T00:00:00Z') + raised[0].t_s * 1000, -1);
    // nothing else drifted: the period watch stays quiet
    expect(events.filter((e) => e.kind === 'period-drift')).toEqual([]);
  });

  it('a 500 ppm period step is raised within 3 windows of the first window that contains it', async () => {
    const tStep = 10 * 3600 + 123;
    const sc = { ...quietWeek(), name: 'step-mid', duration_s: 16 * 3600, dropouts: [], period_steps: [{ t_s: tStep, ppm: 500 }] };
    const file = await simulateToFile(dir, sc, 13);
    const { events, windows } = await importAndRead(file, writeStation(dir), join(dir, 'step.db'));
    const raised = events.filter((e) => e.kind === 'period-drift' && e.state === 'raised');
    expect(raised).toHaveLength(1);
    // windows carry the run time base too (t_start_s…t_end_s)
    const first = windows.findIndex((w) => w.t_end_s > tStep);
    const at = windows.findIndex((w) => Math.abs(w.t_mid_s - raised[0].t_s) < 1e-6);
    expect(first).toBeGreaterThan(30); // past the baseline
    expect(at).toBeGreaterThanOrEqual(first);
    expect(at - first + 1).toBeLessThanOrEqual(3);
    // the reported shift is up, of the order of the step (the raising window holds most of it)
    expect(raised[0].value!).toBeGreaterThan(300);
    expect(raised[0].value!).toBeLessThan(600);
    expect(raised[0].threshold).toBe(300);
    expect(events.filter((e) => e.kind === 'equilibrium-drift')).toEqual([]);
  });
});
