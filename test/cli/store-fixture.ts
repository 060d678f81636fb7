/**
 * A real store for the query-command tests: three recordings made by the
 * simulator at full speed (through the real wire encoders) and imported with
 * the built `fibrewatch import`, each dated with --started-at. Scenarios are
 * invented for the tests.
 */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { parseScenario, type ScenarioInput } from '../../drivers/simulator/scenario.js';
import { runSimulator } from '../../drivers/simulator/run-simulator.js';
import { runCliAsync } from '../helpers/cli.js';

/** One imported run as the tests expect to find it. */
export interface FixtureRun {
  run: number;
  station: string;
  fibre: string;
  started_at: string;
  /** simulated length, s */
  duration_s: number;
  sample_rate_Hz: number;
  /** the recording and the station file it was imported with */
  file: string;
  stationFile: string;
  /** truth of the simulation */
  inertia_kg_m2: number;
  kappa_Nm_per_rad: number;
  /** station gives inertia (so κ is reported) */
  hasInertia: boolean;
  /** station gives fibre diameter and length (so G is reported) */
  hasGeometry: boolean;
  dropouts: { t_s: number; duration_s: number }[];
}

/** Fibre geometry of the tungsten fibre in runs 1 and 3 (invented). */
export const W25 = { name: 'W25-a', material: 'tungsten', diameter_m: 2.5e-5, length_m: 0.8 };
/** The uncertainties run 3's station gives for that fibre (1 % of d, 1 mm of L) and for the inertia (0.4 %). */
export const W25_SIGMAS = { diameter_sigma_m: 2.5e-7, length_sigma_m: 1e-3 };
export const INERTIA_SIGMA_REL = 0.004;

interface Spec {
  station: Record<string, unknown>;
  scenario: ScenarioInput;
  started_at: string;
  seed: number;
  file: string;
}

const base = (name: string, kappa: number, I: number, duration_s: number): Omit<ScenarioInput, 'output'> => ({
  name, duration_s, sample_rate_Hz: 10, inertia_kg_m2: I, kappa_Nm_per_rad: kappa, q: 800,
  thermal_noise: false, angle_noise_rad: 2e-7,
  initial: { amplitude_rad: 0.004, phase_rad: 0.4, equilibrium_rad: 1e-3 },
});

/** The three runs, in import order (run numbers 1, 2, 3). */
function specs(): Spec[] {
  const I = 8e-8;
  const kA = 7.9e-9; // period about 20 s
  return [
    {
      // lines with a temperature column, a 30 s dropout (a gap), an equilibrium creep and a period step (alerts)
      station: {
        station: 'bench-a', fibre: W25, pendulum: { inertia_kg_m2: I },
        input: { format: 'lines', columns: ['t_s', 'angle_rad', 'temp_C'] }, sensor: { kind: 'angle' },
        analysis: { window_periods: 4, step_periods: 1 },
        alerts: { equilibrium_rate_rad_per_hour: 5e-6, period_change_ppm: 300, no_data_s: 20, stderr: false },
      },
      scenario: {
        ...base('cli-a', kA, I, 2400), sample_rate_Hz: 5,
        creep: { a_rad: 4e-5, tc_s: 600, start_s: 0 },
        dropouts: [{ t_s: 600, duration_s: 30 }],
        period_steps: [{ t_s: 1500, ppm: 2000 }],
        temperature_channel: { noise_K: 0.002 },
        output: { format: 'lines', columns: ['t_s', 'angle_rad', 'temp_C'] },
      },
      started_at: '2026-03-01T10:00:00.000Z', seed: 11, file: 'run-a.txt',
    },
    {
      // frames, another station and fibre, no inertia and no geometry: no κ, no G; spans midnight
      station: {
        station: 'bench-b', fibre: { name: 'QZ-b', material: 'fused silica' },
        input: { format: 'frames', channels: [{ role: 'angle_rad', scale: 1e-9 }] }, sensor: { kind: 'angle' },
        alerts: { stderr: false },
      },
      scenario: { ...base('cli-b', 5e-9, I, 1200), output: { format: 'frames', channels: [{ role: 'angle_rad', scale: 1e-9 }] } },
      started_at: '2026-03-05T23:50:00.000Z', seed: 12, file: 'run-b.bin',
    },
    {
      // the tungsten fibre again a few days later, κ 1 % higher: κ moved; the station now states the
      // hand-measured uncertainties (systematic: they enter the run's κ and G once)
      station: {
        station: 'bench-a', fibre: { ...W25, ...W25_SIGMAS }, pendulum: { inertia_kg_m2: I, inertia_sigma_kg_m2: INERTIA_SIGMA_REL * I },
        input: { format: 'lines', columns: ['t_s', 'angle_rad'] }, alerts: { stderr: false },
      },
      scenario: { ...base('cli-c', kA * 1.01, I, 900), output: { format: 'lines', columns: ['t_s', 'angle_rad'] } },
      started_at: '2026-03-10T08:00:00.000Z', seed: 13, file: 'run-c.txt',
    },
  ];
}

/** Simulate and import the three runs into DIR/fw.db; returns the runs and the store path. */
export async function buildStore(dir: string): Promise<{ db: string; runs: FixtureRun[] }> {
  const db = join(dir, 'fw.db');
  const runs: FixtureRun[] = [];
  const all = specs();
  for (const [i, s] of all.entries()) {
    const sc = parseScenario(s.scenario);
    const file = join(dir, s.file);
    await runSimulator({ scenario: sc, out: file, speed: 0, seed: s.seed });
    const stationFile = join(dir, `station-${i + 1}.json`);
    writeFileSync(stationFile, JSON.stringify(s.station, null, 2));
    const r = await runCliAsync(['import', file, '--station', stationFile, '--db', db, '--started-at', s.started_at, '--json']);
    if (r.status !== 0) throw new Error(`import of ${file} failed (${r.status}): ${r.stderr}`);
    const summary = JSON.parse(r.stdout) as { run: number };
    const st = s.station as { station: string; fibre: { name: string; diameter_m?: number }; pendulum?: { inertia_kg_m2?: number } };
    runs.push({
      run: summary.run, station: st.station, fibre: st.fibre.name, started_at: s.started_at,
      duration_s: sc.duration_s, sample_rate_Hz: sc.sample_rate_Hz, file, stationFile,
      inertia_kg_m2: sc.I, kappa_Nm_per_rad: sc.kappa,
      hasInertia: st.pendulum?.inertia_kg_m2 !== undefined, hasGeometry: st.fibre.diameter_m !== undefined,
      dropouts: sc.dropouts,
    });
  }
  return { db, runs };
}
