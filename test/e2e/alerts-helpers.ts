/**
 * Shared steps of the alert end-to-end tests: make a recording with the
 * simulator (the real wire encoder), write a station file, import it with the
 * built CLI and read the run's events back through `fibrewatch events --json`.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { join } from 'node:path';
import { parseScenario, type ScenarioInput } from '../../drivers/simulator/scenario.js';
import { runSimulator } from '../../drivers/simulator/run-simulator.js';
import { runCliAsync } from '../helpers/cli.js';

/** The quiet-week scenario shipped with the simulator (an invented, settled 429 s tungsten balance). */
export function quietWeek(): ScenarioInput {
  const p = fileURLToPath(new URL('../../drivers/simulator/scenarios/quiet-week.json', import.meta.url));
  return JSON.parse(readFileSync(p, 'utf8')) as ScenarioInput;
}

/** Simulate `sc` as fast as possible into `<dir>/<name>.csv`; returns the path. */
export async function simulateToFile(dir: string, sc: ScenarioInput, seed: number): Promise<string> {
  const file = join(dir, `${sc.name}.csv`);
  await runSimulator({ scenario: parseScenario(sc), out: file, speed: 0, seed });
  return file;
}

/** Alert thresholds at docs/commands.md's example values (5e-6 rad/h, 300 ppm). */
export const REALISTIC_ALERTS = { equilibrium_rate_rad_per_hour: 5e-6, period_change_ppm: 300, no_data_s: 20 };

/** The station of the quiet-week balance, reading t_s, angle_rad, temp_C lines, with extra alerts settings. */
export function writeStation(dir: string, alerts: Record<string, unknown> = {}, name = 'station.json', input: Record<string, unknown> = {}): string {
  const p = join(dir, name);
  writeFileSync(p, JSON.stringify({
    station: 'alerts-bench',
    fibre: { name: 'W25-demo-03', material: 'tungsten', diameter_m: 2.5e-5, length_m: 0.8 },
    pendulum: { inertia_kg_m2: 3.6e-5 },
    input: { format: 'lines', columns: ['t_s', 'angle_rad', 'temp_C'], ...input },
    sensor: { kind: 'angle' },
    analysis: { window_periods: 4, step_periods: 1 },
    alerts: { ...REALISTIC_ALERTS, ...alerts },
  }));
  return p;
}

/** One event as `fibrewatch events --json` prints it (docs/commands.md). */
export interface EventJson {
  t: string;
  t_s: number;
  kind: string;
  severity: string;
  message: string;
  value: number | null;
  threshold: number | null;
  state: 'raised' | 'updated' | 'cleared' | null;
  data: Record<string, unknown> | null;
}

/** One window as `fibrewatch windows --json` prints it (the fields these tests use). */
export interface WindowJson {
  index: number;
  t_start_s: number;
  t_mid_s: number;
  t_end_s: number;
  status: string;
}

/** Import `file` as a new run; returns the run id, its events and windows, and the import's stderr. */
export async function importAndRead(file: string, station: string, db: string): Promise<{ run: number; events: EventJson[]; windows: WindowJson[]; stderr: string }> {
  const imp = await runCliAsync(['import', file, '--station', station, '--db', db, '--started-at', '2026-03-02T00:00:00Z', '--json']);
  if (imp.status !== 0) throw new Error(`import exited ${imp.status}: ${imp.stderr}`);
  const run = (JSON.parse(imp.stdout) as { run: number }).run;
  const ev = await runCliAsync(['events', String(run), '--db', db, '--json']);
  if (ev.status !== 0) throw new Error(`events exited ${ev.status}: ${ev.stderr}`);
  const win = await runCliAsync(['windows', String(run), '--db', db, '--json']);
  if (win.status !== 0) throw new Error(`windows exited ${win.status}: ${win.stderr}`);
  return { run, events: JSON.parse(ev.stdout) as EventJson[], windows: JSON.parse(win.stdout) as WindowJson[], stderr: imp.stderr };
}
