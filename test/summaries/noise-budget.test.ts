/**
 * The noise budget read from a real store: a simulated run with a dropout
 * in the middle, imported by the built CLI, then summarised in-process. No
 * Welch segment may straddle the gap, so the segment length follows the
 * longer stretch on one side of it.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type Database from 'better-sqlite3';
import { openStore } from '../../db/open.js';
import { parseScenario } from '../../drivers/simulator/scenario.js';
import { runSimulator } from '../../drivers/simulator/run-simulator.js';
import { buildNoiseBudget, chooseSegment, MAX_SEGMENT } from '../../src/summaries/noise-budget.js';
import { kappaFromPeriod } from '../../src/physics/torsion.js';
import { RuntimeError } from '../../src/domain/errors.js';
import { sqliteReadStore } from '../../db/read-store.js';
import { runCliAsync } from '../helpers/cli.js';

const I = 1e-4, T0 = 20, FS = 10;
const GAP = { t_s: 6000, duration_s: 300 };
let dir: string;
let db: Database.Database;
let atRest: Database.Database;

/** Simulate a scenario to a lines file and import it with the built CLI into its own store; the store, open for reading. */
async function imported(name: string, scenario: Record<string, unknown>, station: Record<string, unknown>): Promise<Database.Database> {
  const sc = parseScenario({ name, ...scenario, output: { format: 'lines', columns: ['t_s', 'angle_rad'] } });
  const file = join(dir, `${name}.txt`);
  await runSimulator({ scenario: sc, out: file, speed: 0, seed: 4 });
  const stationFile = join(dir, `${name}.json`);
  writeFileSync(stationFile, JSON.stringify({
    station: name, fibre: { name: `${name}-fibre` }, input: { format: 'lines', columns: ['t_s', 'angle_rad'] },
    analysis: { period_guess_s: T0 }, alerts: { stderr: false }, ...station,
  }));
  const store = join(dir, `${name}.db`);
  const r = await runCliAsync(['import', file, '--station', stationFile, '--db', store, '--started-at', '2026-04-02T00:00:00Z']);
  if (r.status !== 0) throw new Error(r.stderr);
  return openStore(store, { readonly: true });
}

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'fw-noise-budget-'));
  const pendulum = { duration_s: 14400, sample_rate_Hz: FS, inertia_kg_m2: I, kappa_Nm_per_rad: kappaFromPeriod(I, T0), q: 2000 };
  db = await imported('gap', {
    ...pendulum, damping: 'internal', thermal_noise: true, angle_noise_rad: 2e-10,
    initial: { amplitude_rad: 2e-5, phase_rad: 0, equilibrium_rad: 0 }, dropouts: [GAP],
  }, { pendulum: { inertia_kg_m2: I }, environment: { temperature_K: 293.5 } });
  // a balance at rest, read by a noisy readout: no window finds a swing
  atRest = await imported('at-rest', { ...pendulum, duration_s: 3600, thermal_noise: false, angle_noise_rad: 1e-7 }, { pendulum: { inertia_kg_m2: I } });
}, 120_000);
afterAll(() => {
  db?.close();
  atRest?.close();
  rmSync(dir, { recursive: true, force: true });
});

describe('noise budget from the store', () => {
  it('chooses the longest power-of-two segment of which eight, half overlapping, fit the longest stretch', () => {
    expect(chooseSegment(14400, 0.1)).toBe(16384); // 14400/(4.5·0.1) = 32000
    expect(chooseSegment(32768 * 4.5 * 0.1, 0.1)).toBe(32768);
    expect(chooseSegment(1e9, 0.1)).toBe(MAX_SEGMENT);
    expect(chooseSegment(63 * 4.5, 1)).toBeNull();
  });

  it('no segment straddles the gap: the segment fits the longer side, and the count is what the two sides hold', async () => {
    const r = await buildNoiseBudget(sqliteReadStore(db, 'test'), 1);
    // the longer side is 14400 − 6300 = 8100 s at most: 8100/(4.5·0.1) = 18000 → 2¹⁴ samples
    expect(r.segment_s).toBeCloseTo(1638.4, 6);
    const L = r.segment_s! * FS;
    const fits = (span_s: number) => Math.max(0, Math.floor((span_s * FS - L) / (L / 2)) + 1);
    expect(r.segments).toBeGreaterThan(0);
    expect(r.segments).toBeLessThanOrEqual(fits(GAP.t_s) + fits(14400 - GAP.t_s - GAP.duration_s));
    // without the gap the same samples would hold more: 14100 s of data in one stretch
    expect(r.segments).toBeLessThan(fits(14400 - GAP.duration_s));
    expect(r.budget.frequency_Hz[0]).toBeCloseTo(2 / r.segment_s!, 9);
  });

  it('takes the temperature from the station when no temp_C channel is stored, and the damping default internal', async () => {
    const r = await buildNoiseBudget(sqliteReadStore(db, 'test'), 1);
    expect(r.budget.temperature_K).toBe(293.5);
    expect(r.budget.temperature_assumed).toBe(false);
    expect(r.budget.damping).toBe('internal');
    expect(r.notes).toEqual([]);
    expect(r.step_s! / T0).toBeCloseTo(1, 3);
  });

  it('a balance at rest: windows with no swing leave the samples as they are; the readout floor is measured, Q is not', async () => {
    const r = await buildNoiseBudget(sqliteReadStore(atRest, 'test'), 1);
    expect(r.segments).toBeGreaterThan(0);
    // white readout of rms σ at f_s: one-sided ASD √(2σ²/f_s)
    expect(Math.abs(r.budget.readout_asd_rad_per_rtHz! / Math.sqrt((2 * 1e-14) / FS) - 1)).toBeLessThan(0.1);
    expect(r.budget.q).toBeNull();
    expect(r.budget.thermal_torque_asd_Nm_per_rtHz).toBeNull();
    // (pure noise now and then passes a window's checks: one such window resolves no decay either)
    expect(r.notes.join('\n')).toMatch(/no ok window in the span|Q unknown/);
  });

  it('an unknown run is a RuntimeError (exit 1)', async () => {
    await expect(buildNoiseBudget(sqliteReadStore(db, 'test'), 7)).rejects.toThrow(RuntimeError);
  });
});
