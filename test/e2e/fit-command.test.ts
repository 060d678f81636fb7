/**
 * `fibrewatch fit` end to end: recordings made by the simulator (through the
 * real wire encoders), decoded by the acquisition drivers in the built CLI.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseScenario } from '../../drivers/simulator/scenario.js';
import { runSimulator } from '../../drivers/simulator/run-simulator.js';
import { runCli } from '../helpers/cli.js';

let dir: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'fw-fit-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const fitJson = (args: string[]) => {
  const r = runCli(['fit', ...args, '--json']);
  return { ...r, rows: r.stdout.trim() ? r.stdout.trim().split('\n').map((l) => JSON.parse(l)) : [] };
};

/** Damped period of the simulated oscillator: ω_d = ω₀·√(1 − 1/(4Q²)) (docs/physics.md, standard result). */
const dampedPeriod = (I: number, kappa: number, q: number) => (2 * Math.PI) / (Math.sqrt(kappa / I) * Math.sqrt(1 - 1 / (4 * q * q)));

describe('fit on encoder data of 1, 3 and 10 full turns (isochronism)', () => {
  it('gives the same period within uncertainty, and the true one', async () => {
    const I = 2.5e-4, kappa = 2.5e-3, q = 400;
    const files: string[] = [];
    for (const turns of [1, 3, 10]) {
      const sc = parseScenario({
        name: `enc-${turns}`, duration_s: 40, sample_rate_Hz: 200, inertia_kg_m2: I, kappa_Nm_per_rad: kappa, q,
        thermal_noise: true, initial: { amplitude_rad: 2 * Math.PI * turns, phase_rad: 0.3, equilibrium_rad: 0 },
        sensor: { kind: 'encoder', counts_per_rev: 10000, counter_bits: 16 },
        output: { format: 'frames', channels: [{ role: 'counts', scale: 1 }] },
      });
      const f = join(dir, `enc-${turns}.bin`);
      await runSimulator({ scenario: sc, out: f, speed: 0, seed: turns });
      files.push(f);
    }
    const station = join(dir, 'enc-station.json');
    writeFileSync(station, JSON.stringify({
      station: 'enc', fibre: { name: 'f' }, pendulum: { inertia_kg_m2: I },
      input: { format: 'frames', channels: [{ role: 'counts', scale: 1 }] },
      sensor: { kind: 'encoder', counts_per_rev: 10000, counter_bits: 16 },
    }));
    const r = fitJson([...files, '--station', station]);
    expect(r.status).toBe(0);
    expect(r.rows.length).toBe(3);
    const truth = dampedPeriod(I, kappa, q);
    for (const row of r.rows) {
      expect(row.status).toBe('ok');
      expect(Math.abs(row.period_s - truth)).toBeLessThan(4 * row.period_sigma_s + 1e-9 * truth);
      expect(row.kappa_Nm_per_rad).toBeCloseTo(kappa, 6);
    }
    for (let i = 0; i < 3; i++) for (let j = i + 1; j < 3; j++) {
      const a = r.rows[i], b = r.rows[j];
      expect(Math.abs(a.period_s - b.period_s)).toBeLessThan(4 * Math.hypot(a.period_sigma_s, b.period_sigma_s));
    }
    // ten turns: the amplitude is fitted as the swing itself (in radians, no wrap)
    expect(r.rows[2].amplitude_rad).toBeGreaterThan(2 * Math.PI * 9);
  });
});

describe('fit warns when the swing nears the fibre\'s elastic twist limit', () => {
  it('prints the caution for ten turns on a thin music wire, not for one turn', async () => {
    // music wire 0.025 in × 2.5 m: limit ≈ 15 turns (src/physics/twist.ts; 0.45 × tensile strength, common practice)
    const fibre = { name: 'mw', material: 'music wire', diameter_m: 6.35e-4, length_m: 2.5 };
    const I = 0.036;
    const kappa = (Math.PI * 79.29e9 * 6.35e-4 ** 4) / (32 * 2.5); // handbook G for music wire (SMI Handbook via ODOP table)
    const out: Record<number, string> = {};
    for (const turns of [1, 10]) {
      const sc = parseScenario({
        name: `mw-${turns}`, duration_s: 400, sample_rate_Hz: 10, inertia_kg_m2: I, kappa_Nm_per_rad: kappa, q: 500,
        thermal_noise: false, initial: { amplitude_rad: 2 * Math.PI * turns, phase_rad: 0, equilibrium_rad: 0 },
        sensor: { kind: 'encoder', counts_per_rev: 4096 }, output: { format: 'lines', columns: ['t_s', 'counts'] },
      });
      const f = join(dir, `mw-${turns}.txt`);
      await runSimulator({ scenario: sc, out: f, speed: 0, seed: 1 });
      const station = join(dir, 'mw-station.json');
      writeFileSync(station, JSON.stringify({ station: 'mw', fibre, pendulum: { inertia_kg_m2: I }, input: { columns: ['t_s', 'counts'] }, sensor: { kind: 'encoder', counts_per_rev: 4096 } }));
      const r = runCli(['fit', f, '--station', station]);
      expect(r.status).toBe(0);
      out[turns] = r.stderr;
    }
    expect(out[10]).toMatch(/CAUTION: twist of 10\.\d+ turns reaches \d+ % of this fibre's elastic limit/);
    expect(out[10]).toMatch(/local codes and licensed practice/);
    expect(out[1]).not.toMatch(/CAUTION/);
  });
});

describe('fit on a split photodiode whose first swings saturate', () => {
  it('returns the right period and equilibrium from the unsaturated samples', async () => {
    const I = 2e-4, kappa = 8.773e-6, q = 300;
    const sc = parseScenario({
      name: 'pd-sat', duration_s: 600, sample_rate_Hz: 10, inertia_kg_m2: I, kappa_Nm_per_rad: kappa, q,
      thermal_noise: true, initial: { amplitude_rad: 0.003, phase_rad: 0.5, equilibrium_rad: 0 },
      sensor: { kind: 'split-photodiode', lever_arm_m: 0.3, beam_radius_m: 5e-4, power: 1, noise: 1e-4, detector_half_size_m: 0.005 },
      output: { format: 'lines', columns: ['t_ms', 'a', 'b'] },
    });
    const f = join(dir, 'pd.txt');
    await runSimulator({ scenario: sc, out: f, speed: 0, seed: 3 });
    const station = join(dir, 'pd-station.json');
    writeFileSync(station, JSON.stringify({
      station: 'pd', fibre: { name: 'f' }, input: { format: 'lines', columns: ['t_ms', 'a', 'b'] },
      sensor: { kind: 'split-photodiode', lever_arm_m: 0.3, beam_radius_m: 5e-4 },
    }));
    const r = fitJson([f, '--station', station]);
    expect(r.status).toBe(0);
    const row = r.rows[0];
    expect(row.status).toBe('ok');
    expect(row.samples_masked).toBeGreaterThan(1000); // most of every swing is off the split
    const truth = dampedPeriod(I, kappa, q);
    expect(Math.abs(row.period_s - truth)).toBeLessThan(4 * row.period_sigma_s);
    expect(Math.abs(row.equilibrium_rad)).toBeLessThan(4 * row.equilibrium_sigma_rad + 1e-7);
  });
});

describe('fit refuses bad input with a clear status, never a silent number', () => {
  const cols = ['--columns', 't_s,angle_rad'];
  it('empty file', () => {
    const f = join(dir, 'empty.txt');
    writeFileSync(f, '');
    const r = fitJson([f, ...cols]);
    expect(r.status).toBe(2);
    expect(r.rows[0].status).toBe('too-few-samples');
    expect(r.rows[0].period_s).toBeNull();
    expect(r.stderr).toContain('empty.txt');
  });
  it('too few samples', () => {
    const f = join(dir, 'few.txt');
    writeFileSync(f, Array.from({ length: 8 }, (_, i) => `${i},${Math.sin(i)}`).join('\n') + '\n');
    const r = fitJson([f, ...cols]);
    expect(r.status).toBe(2);
    expect(r.rows[0].status).toBe('too-few-samples');
  });
  it('too few periods', () => {
    const f = join(dir, 'short.txt');
    writeFileSync(f, Array.from({ length: 300 }, (_, i) => `${i * 0.1},${Math.cos((2 * Math.PI * i * 0.1) / 60)}`).join('\n') + '\n');
    const r = fitJson([f, ...cols]);
    expect(r.status).toBe(2);
    expect(['too-few-periods', 'no-oscillation', 'period-outside-window', 'did-not-converge']).toContain(r.rows[0].status);
    expect(r.rows[0].period_s).toBeNull();
  });
  it('no oscillation', () => {
    let s = 12345;
    const rnd = () => ((s = (s * 1103515245 + 12345) >>> 0) / 4294967296) - 0.5;
    const f = join(dir, 'flat.txt');
    writeFileSync(f, Array.from({ length: 4000 }, (_, i) => `${i * 0.1},${1e-3 + 1e-7 * rnd()}`).join('\n') + '\n');
    const r = fitJson([f, ...cols]);
    expect(r.status).toBe(2);
    expect(['no-oscillation', 'amplitude-below-noise']).toContain(r.rows[0].status);
    expect(r.rows[0].period_s).toBeNull();
  });
  it('NaN lines are counted as bad records and do not disturb the fit', () => {
    const f = join(dir, 'nan.txt');
    const lines = Array.from({ length: 4000 }, (_, i) => (i % 97 === 5 ? `${i * 0.1},nan` : `${i * 0.1},${1e-3 * Math.cos((2 * Math.PI * i * 0.1) / 60)}`));
    writeFileSync(f, lines.join('\n') + '\n');
    const r = fitJson([f, ...cols]);
    expect(r.status).toBe(0);
    expect(r.rows[0].status).toBe('ok');
    expect(r.rows[0].bad_records).toBe(lines.filter((l) => l.endsWith('nan')).length);
    expect(r.rows[0].period_s).toBeCloseTo(60, 6);
  });
  it('a missing file or no column spec is a usage error', () => {
    expect(runCli(['fit', join(dir, 'nope.txt'), ...cols]).status).toBe(2);
    const f = join(dir, 'x.txt');
    writeFileSync(f, '0,0\n');
    const r = runCli(['fit', f]);
    expect(r.status).toBe(2);
    expect(r.stderr).toContain('--columns');
  });
});
