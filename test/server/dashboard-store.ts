/**
 * The store the dashboard tests read: the three runs of the query-command
 * tests (test/cli/store-fixture.ts: two stations, two fibres, a gap, alerts, a
 * temperature channel), a fourth whose fibre is named with markup, to show
 * that names are text on every page, and a fifth on an anelastic fibre whose
 * source mass is moved between two configurations (a state channel), for the
 * swing-amplitude and configuration sections. All invented.
 */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { parseScenario } from '../../drivers/simulator/scenario.js';
import { runSimulator } from '../../drivers/simulator/run-simulator.js';
import { runCliAsync } from '../helpers/cli.js';
import { buildStore, type FixtureRun } from '../cli/store-fixture.js';

/** A fibre name that would run script if it were ever put into a page as markup. */
export const MARKUP_FIBRE = '<img src=x onerror=alert(1)>';

/** Simulate a short invented recording and import it into `db` as a run of `station`, fibre `fibre`; returns the run number. */
export async function importSmallRun(dir: string, db: string, o: { station: string; fibre: string; started_at: string; seed?: number; duration_s?: number }): Promise<number> {
  const sc = parseScenario({
    name: 'small', duration_s: o.duration_s ?? 600, sample_rate_Hz: 5, inertia_kg_m2: 8e-8, kappa_Nm_per_rad: 7.9e-9, q: 800,
    thermal_noise: false, angle_noise_rad: 2e-7, initial: { amplitude_rad: 0.004, phase_rad: 0, equilibrium_rad: 0 },
    output: { format: 'lines', columns: ['t_s', 'angle_rad'] },
  });
  const tag = `${o.station}-${o.seed ?? 21}`.replace(/[^\w-]/g, '_');
  const file = join(dir, `run-${tag}.txt`);
  await runSimulator({ scenario: sc, out: file, speed: 0, seed: o.seed ?? 21 });
  const station = join(dir, `station-${tag}.json`);
  writeFileSync(station, JSON.stringify({
    station: o.station, fibre: { name: o.fibre }, pendulum: { inertia_kg_m2: 8e-8 },
    input: { format: 'lines', columns: ['t_s', 'angle_rad'] }, alerts: { stderr: false },
  }));
  const r = await runCliAsync(['import', file, '--station', station, '--db', db, '--started-at', o.started_at, '--json']);
  if (r.status !== 0) throw new Error(`import of ${file} failed (${r.status}): ${r.stderr}`);
  return (JSON.parse(r.stdout) as { run: number }).run;
}

/** The configurations run's truth: the deflection the second state adds, rad, its period change, ppm, and the fibre's period–amplitude slope, s/rad. */
export const CONFIG_TRUTH = { delta_rad: 5e-6, period_ppm: 120, slope_s_per_rad: 2 };

/**
 * Simulate an hour on an anelastic fibre (period about 20 s, swing decaying
 * from 5 mrad) with a source mass switched between states 1 and 2 every
 * 10 minutes, written with a state column, and import it into `db` as a run
 * of station bench-d, fibre W18-d, started before the other runs (so it lists
 * last); returns the run number.
 */
export async function importConfigurationsRun(dir: string, db: string): Promise<number> {
  const I = 8e-8, kappa = 7.9e-9;
  const sc = parseScenario({
    name: 'two-configurations', duration_s: 3600, sample_rate_Hz: 5, inertia_kg_m2: I, kappa_Nm_per_rad: kappa, q: 800,
    thermal_noise: false, angle_noise_rad: 2e-7, initial: { amplitude_rad: 0.005, phase_rad: 0, equilibrium_rad: 0 },
    anelastic: { period_amplitude_slope_s_per_rad: CONFIG_TRUTH.slope_s_per_rad },
    configurations: { states: [{ state: 1 }, { state: 2, torque_Nm: CONFIG_TRUTH.delta_rad * kappa, period_ppm: CONFIG_TRUTH.period_ppm }], every_s: 600 },
    output: { format: 'lines', columns: ['t_s', 'angle_rad', 'state'] },
  });
  const file = join(dir, 'run-configurations.txt');
  await runSimulator({ scenario: sc, out: file, speed: 0, seed: 31 });
  const station = join(dir, 'station-configurations.json');
  writeFileSync(station, JSON.stringify({
    station: 'bench-d', fibre: { name: 'W18-d' }, pendulum: { inertia_kg_m2: I },
    input: { format: 'lines', columns: ['t_s', 'angle_rad', 'state'] }, analysis: { window_periods: 4, step_periods: 2 }, alerts: { stderr: false },
  }));
  const r = await runCliAsync(['import', file, '--station', station, '--db', db, '--started-at', '2026-02-20T09:00:00Z', '--json']);
  if (r.status !== 0) throw new Error(`import of ${file} failed (${r.status}): ${r.stderr}`);
  return (JSON.parse(r.stdout) as { run: number }).run;
}

/** Build the store in DIR; the markup fibre's run is run 4, the configurations run run 5. */
export async function buildDashboardStore(dir: string): Promise<{ db: string; runs: FixtureRun[]; markupRun: number; configRun: number }> {
  const { db, runs } = await buildStore(dir);
  const markupRun = await importSmallRun(dir, db, { station: 'bench-c', fibre: MARKUP_FIBRE, started_at: '2026-03-12T09:00:00Z' });
  const configRun = await importConfigurationsRun(dir, db);
  return { db, runs, markupRun, configRun };
}
