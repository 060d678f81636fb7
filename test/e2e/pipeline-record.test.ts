/**
 * The virtual balance with known parameters through a real pseudo-terminal:
 * `fibrewatch simulate --speed` in one process, `fibrewatch record` in
 * another, a few simulated hours. The stored windows recover the simulated
 * period within their own uncertainty (pulls consistent with a unit normal),
 * and the run's κ and G match the scenario's within their uncertainty.
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseScenario } from '../../drivers/simulator/scenario.js';
import { stationForScenario } from '../helpers/station-for-scenario.js';
import { lookupMaterial } from '../../src/physics/materials.js';
import { startPtyPair, waitFor, type PtyPair } from '../../drivers/pty-pair.js';
import { runCli, startCli } from '../helpers/cli.js';
import { samplesIn } from '../helpers/store.js';

// invented scenario: 50 µm tungsten, 0.5 m long, a 4.5e-6 kg·m² bob: T ≈ 30 s; no temperature swing, no creep
const SCENARIO = {
  name: 'record-known',
  duration_s: 3 * 3600,
  sample_rate_Hz: 10,
  inertia_kg_m2: 4.5e-6,
  fibre: { name: 'W50-known', material: 'tungsten', diameter_m: 5e-5, length_m: 0.5 },
  q: 3000,
  temperature_K: 295,
  thermal_noise: true,
  angle_noise_rad: 1e-6,
  initial: { amplitude_rad: 2e-3, phase_rad: 0, equilibrium_rad: 0 },
  sensor: { kind: 'angle' },
  output: { format: 'lines', columns: ['t_s', 'angle_rad'] },
};
const SPEED = 800;

let dir: string;
let pty: PtyPair | undefined;

beforeEach(() => {
  dir = mkdtempSync(join(tmpdir(), 'fw-rec-known-'));
});
afterEach(async () => {
  await pty?.stop();
  pty = undefined;
  rmSync(dir, { recursive: true, force: true });
});

describe('record of the simulator through a pseudo-terminal', () => {
  it('recovers the simulated period, κ and G within their uncertainties', async () => {
    const sc = parseScenario(SCENARIO);
    const scenarioPath = join(dir, 'scenario.json');
    writeFileSync(scenarioPath, JSON.stringify(SCENARIO));
    pty = await startPtyPair(dir);
    const station = stationForScenario(sc, { name: 'known-bench', device: pty.devicePath });
    const stationPath = join(dir, 'station.json');
    writeFileSync(stationPath, JSON.stringify(station));
    const db = join(dir, 'store.db');

    const rec = startCli(['record', '--station', stationPath, '--db', db]);
    await rec.waitForStderr('recording run');
    const sim = startCli(['simulate', '--scenario', scenarioPath, '--device', pty.feedPath, '--speed', String(SPEED), '--seed', '5']);
    expect((await sim.exited).code, sim.stderr()).toBe(0);
    const N = sc.duration_s * sc.sample_rate_Hz;
    // the first line after the port opens is dropped as torn: the simulator's first line is a comment
    await waitFor(() => samplesIn(db) >= N, 'every simulated sample committed', 30_000, 100);
    rec.child.kill('SIGTERM');
    expect((await rec.exited).code, rec.stderr()).toBe(0);
    expect(samplesIn(db)).toBe(N);

    // truth: viscous damping b = I·ω₀/Q gives γ = ω₀/(2Q), damped ω = √(ω₀² − γ²)
    const w0 = Math.sqrt(sc.kappa / sc.I);
    const gamma = w0 / (2 * sc.q);
    const T_true = (2 * Math.PI) / Math.sqrt(w0 * w0 - gamma * gamma);

    const ws = JSON.parse(runCli(['windows', '1', '--db', db, '--json']).stdout) as { status: string; period_s: number; period_sigma_s: number }[];
    const ok = ws.filter((w) => w.status === 'ok');
    expect(ok.length).toBeGreaterThan(0.9 * ws.length);
    const pulls = ok.map((w) => (w.period_s - T_true) / w.period_sigma_s);
    const n = pulls.length;
    const mean = pulls.reduce((s, p) => s + p, 0) / n;
    const sd = Math.sqrt(pulls.reduce((s, p) => s + (p - mean) ** 2, 0) / (n - 1));
    // 4-period windows stepping 1 period: about n·step/window = n/4 independent windows.
    // For a unit normal the mean of N_eff independent pulls has σ = 1/√N_eff (3σ bound); the sample SD of
    // N_eff ≈ 85 has σ ≈ 1/√(2·N_eff) ≈ 0.08, so [0.7, 1.4] is wide (common practice, no source)
    const nEff = (n * station.analysis.step_periods) / station.analysis.window_periods;
    expect(nEff).toBeGreaterThan(60);
    expect(Math.abs(mean), `pull mean ${mean} over ${n} windows`).toBeLessThan(3 / Math.sqrt(nEff));
    console.log(`pulls: mean ${mean}, SD ${sd}, n ${n}`);
    expect(sd, `pull SD ${sd}`).toBeGreaterThan(0.7);
    expect(sd, `pull SD ${sd}`).toBeLessThan(1.4);

    const show = JSON.parse(runCli(['show', '1', '--db', db, '--json']).stdout) as Record<string, number>;
    const G_true = lookupMaterial('tungsten')!.shearModulus.value;
    expect(Math.abs(show.kappa_Nm_per_rad - sc.kappa), `κ ${show.kappa_Nm_per_rad} ± ${show.kappa_sigma_Nm_per_rad} vs ${sc.kappa}`)
      .toBeLessThan(3 * show.kappa_sigma_Nm_per_rad);
    expect(Math.abs(show.shear_modulus_Pa - G_true), `G ${show.shear_modulus_Pa} ± ${show.shear_modulus_sigma_Pa} vs ${G_true}`)
      .toBeLessThan(3 * show.shear_modulus_sigma_Pa);
    // the uncertainties are meaningful, not inflated to pass: κ to better than 10 ppm here
    expect(show.kappa_sigma_Nm_per_rad / sc.kappa).toBeLessThan(1e-5);
  }, 60_000);
});
