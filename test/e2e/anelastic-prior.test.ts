/**
 * The period watcher of a new run takes the fibre's period–amplitude slope from
 * its earlier runs in the store: a quiet free decay on an anelastic fibre then
 * raises no period-drift through `import`, where the same recording imported
 * into a fresh store (no earlier run to learn from) does. Scenario invented;
 * the simulator's `anelastic` key makes the period grow by 6 s/rad of swing.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseScenario } from '../../drivers/simulator/scenario.js';
import { runSimulator } from '../../drivers/simulator/run-simulator.js';
import { stationForScenario } from '../helpers/station-for-scenario.js';
import { runCliAsync } from '../helpers/cli.js';

const I = 1e-5, T_s = 30;
const base = {
  duration_s: 6 * 3600, sample_rate_Hz: 2, inertia_kg_m2: I, kappa_Nm_per_rad: I * ((2 * Math.PI) / T_s) ** 2, q: 600, damping: 'internal',
  angle_noise_rad: 1e-7, initial: { amplitude_rad: 5e-3 }, anelastic: { period_amplitude_slope_s_per_rad: 6 },
  output: { format: 'lines', columns: ['t_s', 'angle_rad'] }, sensor: { kind: 'angle' },
};

let dir: string, station: string, kicked: string, quiet: string;
beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'fw-anelastic-'));
  // the earlier run: the swing re-excited 20 min in, so its amplitude spans enough to resolve the slope
  const a = parseScenario({ ...base, name: 'kicked', disturbances: [{ t_s: 1200, kick_rad: 2e-3 }] });
  const b = parseScenario({ ...base, name: 'quiet' });
  kicked = join(dir, 'kicked.csv');
  quiet = join(dir, 'quiet.csv');
  await runSimulator({ scenario: a, out: kicked, speed: 0, seed: 21 });
  await runSimulator({ scenario: b, out: quiet, speed: 0, seed: 22 });
  station = join(dir, 'station.json');
  const st = stationForScenario(a, { name: 'anelastic-bench' }) as unknown as Record<string, unknown>;
  writeFileSync(station, JSON.stringify({ ...st, pendulum: { inertia_kg_m2: I, damping: 'internal' } }));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function importInto(db: string, file: string, at: string): Promise<{ run: number; stderr: string; periodDrift: number }> {
  const r = await runCliAsync(['import', file, '--station', station, '--db', db, '--started-at', at, '--json']);
  expect(r.status, r.stderr).toBe(0);
  const run = (JSON.parse(r.stdout) as { run: number }).run;
  const ev = await runCliAsync(['events', String(run), '--db', db, '--json']);
  const events = JSON.parse(ev.stdout) as { kind: string; state: string | null }[];
  return { run, stderr: r.stderr, periodDrift: events.filter((e) => e.kind === 'period-drift' && e.state === 'raised').length };
}

describe('the period watcher learns the fibre from its earlier runs', () => {
  it('a quiet anelastic decay raises period-drift alone, and nothing after a run that measured the slope', async () => {
    const alone = await importInto(join(dir, 'alone.db'), quiet, '2026-04-02T00:00:00Z');
    expect(alone.periodDrift).toBeGreaterThan(0);

    const db = join(dir, 'history.db');
    const first = await importInto(db, kicked, '2026-04-01T00:00:00Z');
    const show = JSON.parse((await runCliAsync(['show', String(first.run), '--db', db, '--json'])).stdout) as { period_amplitude_slope_s_per_rad: number; period_amplitude_slope_sigma_s_per_rad: number };
    expect(Math.abs(show.period_amplitude_slope_s_per_rad - 6)).toBeLessThan(3 * show.period_amplitude_slope_sigma_s_per_rad);
    const second = await importInto(db, quiet, '2026-04-02T00:00:00Z');
    expect(second.stderr).toMatch(/period watcher: the fibre's period–amplitude slope \d.* s\/rad, from run 1/);
    expect(second.periodDrift).toBe(0);
  }, 120_000);
});
