/**
 * `fit` on a real recorded file (written by the simulator through its wire encoder):
 * the hand-measured inertia enters κ's σ once, and the twist caution combines the
 * twist's shear with the load's tension (von Mises, common practice).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseScenario } from '../../drivers/simulator/scenario.js';
import { runSimulator } from '../../drivers/simulator/run-simulator.js';
import { parseStation } from '../../src/config/station.js';
import { fitFile } from '../../src/app/fit-file.js';
import { breakingMass } from '../../src/physics/load.js';
import { lookupMaterial, tensileStrengthAt } from '../../src/physics/materials.js';

// music wire 0.025 in × 2.5 m (invented bench): free limit ≈ 15.6 turns (twist.test.ts), caution at half of it
const fibre = { name: 'mw', material: 'music wire', diameter_m: 6.35e-4, length_m: 2.5 };
const I = 0.036;
const kappa = (Math.PI * 79.29e9 * 6.35e-4 ** 4) / (32 * 2.5); // handbook G (SMI Handbook via ODOP table)
let dir: string, file: string;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'fw-fit-file-'));
  file = join(dir, 'mw-6.txt');
  const sc = parseScenario({
    name: 'mw-6', duration_s: 400, sample_rate_Hz: 10, inertia_kg_m2: I, kappa_Nm_per_rad: kappa, q: 500,
    thermal_noise: false, angle_noise_rad: 1e-4, initial: { amplitude_rad: 2 * Math.PI * 6.5, phase_rad: 0, equilibrium_rad: 0 },
    output: { format: 'lines', columns: ['t_s', 'angle_rad'] },
  });
  await runSimulator({ scenario: sc, out: file, speed: 0, seed: 3 });
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const station = (pendulum: Record<string, unknown>) =>
  parseStation({ station: 'mw', fibre, pendulum: { inertia_kg_m2: I, ...pendulum }, input: { columns: ['t_s', 'angle_rad'] } });

describe('fit of one file', () => {
  it('κ: the window\'s statistical σ and the inertia\'s, once, in quadrature', async () => {
    const stat = await fitFile(file, station({}));
    const tot = await fitFile(file, station({ inertia_sigma_kg_m2: 0.002 * I }));
    expect(stat.status).toBe('ok');
    expect(tot.kappa_sigma_Nm_per_rad! / Math.hypot(stat.kappa_sigma_Nm_per_rad!, 0.002 * tot.kappa_Nm_per_rad!)).toBeCloseTo(1, 9);
  });

  it('6.5 turns: no caution on the free fibre; with half its breaking load hung on it, the combined stress raises one', async () => {
    const free = await fitFile(file, station({}));
    expect(free.caution).toBeUndefined();
    // 6.5 of 15.6 turns is 42 % < 50 %; half the breaking load leaves √(0.45² − 0.5²/3)/0.45 = 77 % of the limit (by hand), so 54 %
    const w = lookupMaterial('music wire')!;
    const m = 0.5 * breakingMass(fibre.diameter_m, tensileStrengthAt(w, fibre.diameter_m));
    const loaded = await fitFile(file, station({ mass_kg: m }));
    expect(loaded.twist_limit_rad! / free.twist_limit_rad!).toBeCloseTo(Math.sqrt(0.45 ** 2 - 0.25 / 3) / 0.45, 9);
    expect(loaded.caution).toMatch(/twist of 6\.\d+ turns reaches 5\d % of this fibre's elastic limit/);
    expect(loaded.caution).toMatch(/von Mises/);
    expect(loaded.caution).toMatch(/local codes and licensed practice/);
  });
});
