/**
 * `fibrewatch noise` of the built CLI against runs of known thermal noise:
 * the simulator (internal and viscous damping, invented scenarios) writes the
 * wire format, `fibrewatch import` puts it through the real pipeline into a
 * real SQLite store, and the budget must give back the torque noise the
 * simulation was driven with (fluctuation–dissipation, Saulson 1990:
 * internal S_τ = 4k_BTκ/(2πfQ), viscous S_τ = 4k_BT·Iω₀/Q; docs/physics.md),
 * the readout noise it was given, and docs/commands.md's fields.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseScenario, type ScenarioInput } from '../../drivers/simulator/scenario.js';
import { runSimulator } from '../../drivers/simulator/run-simulator.js';
import { K_BOLTZMANN } from '../../src/physics/constants.js';
import { kappaFromPeriod } from '../../src/physics/torsion.js';
import { runCli, runCliAsync } from '../helpers/cli.js';

// an invented balance: 20 s period, Q 2000, a 20 µrad swing (a thousand times the thermal
// θ_rms = √(k_BT/κ) ≈ 20 nrad, so every window fits it and measures its decay), 4 h at 10 Hz,
// readout noise far below the thermal angle noise up to the resonance
const I = 1e-4, T0 = 20, Q = 2000, FS = 10, DURATION = 4 * 3600, READOUT = 2e-10;
const KAPPA = kappaFromPeriod(I, T0);

let dir: string;
const db = () => join(dir, 'noise.db');
const runs: Record<'internal' | 'viscous' | 'noInertia', number> = { internal: 0, viscous: 0, noInertia: 0 };

async function importRun(name: string, damping: 'internal' | 'viscous', temperature_K: number, withTemp: boolean, inertia: boolean): Promise<number> {
  const columns: ('t_s' | 'angle_rad' | 'temp_C')[] = withTemp ? ['t_s', 'angle_rad', 'temp_C'] : ['t_s', 'angle_rad'];
  const sc: ScenarioInput = {
    name, duration_s: DURATION, sample_rate_Hz: FS, inertia_kg_m2: I, kappa_Nm_per_rad: KAPPA, q: Q, damping, temperature_K,
    thermal_noise: true, angle_noise_rad: READOUT, initial: { amplitude_rad: 2e-5, phase_rad: 0.3, equilibrium_rad: 1e-4 },
    ...(withTemp ? { temperature_channel: { noise_K: 0.002 } } : {}),
    output: { format: 'lines', columns },
  };
  const file = join(dir, `${name}.txt`);
  await runSimulator({ scenario: parseScenario(sc), out: file, speed: 0, seed: 21 });
  const station = join(dir, `${name}.json`);
  writeFileSync(station, JSON.stringify({
    station: name, fibre: { name: `${name}-fibre` }, pendulum: { ...(inertia ? { inertia_kg_m2: I } : {}), damping },
    input: { format: 'lines', columns }, sensor: { kind: 'angle' }, analysis: { period_guess_s: T0 }, alerts: { stderr: false },
  }));
  const r = await runCliAsync(['import', file, '--station', station, '--db', db(), '--started-at', '2026-04-01T00:00:00Z', '--json']);
  if (r.status !== 0) throw new Error(`import ${name}: ${r.stderr}`);
  return (JSON.parse(r.stdout) as { run: number }).run;
}

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'fw-noise-'));
  runs.internal = await importRun('internal', 'internal', 300, true, true);
  runs.viscous = await importRun('viscous', 'viscous', 295, false, true);
  runs.noInertia = await importRun('no-inertia', 'internal', 295, false, false);
}, 240_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const noise = (...args: string[]) => runCli(['noise', ...args, '--db', db()]);
const json = (run: number, ...args: string[]) => {
  const r = noise(String(run), ...args, '--json');
  expect(r.status, r.stderr).toBe(0);
  return { b: JSON.parse(r.stdout), stderr: r.stderr };
};

const FIELDS = [
  'run', 'from_s', 'to_s', 'temperature_K', 'temperature_assumed', 'damping', 'resonance_Hz', 'q', 'kappa_Nm_per_rad',
  'frequency_Hz', 'angle_asd_rad_per_rtHz', 'torque_asd_Nm_per_rtHz', 'thermal_torque_asd_Nm_per_rtHz',
  'readout_asd_rad_per_rtHz', 'band_Hz', 'excess_over_thermal', 'allan',
];

/** Median of measured over true torque ASD across the thermal band. */
function medianRatioInBand(b: any, truth: (f: number) => number): number {
  const r: number[] = [];
  b.frequency_Hz.forEach((f: number, i: number) => {
    if (f >= b.band_Hz[0] && f <= b.band_Hz[1]) r.push(b.torque_asd_Nm_per_rtHz[i] / Math.sqrt(truth(f)));
  });
  r.sort((x, y) => x - y);
  expect(r.length).toBeGreaterThan(20);
  return r[r.length >> 1];
}

/** The checks both damping laws share: fields and types, the pendulum, readout, band and Allan. */
function common(b: any, run: number, temperature_K: number) {
  expect(Object.keys(b).sort()).toEqual([...FIELDS].sort());
  expect(b.run).toBe(run);
  expect(b.from_s).toBe(0);
  expect(b.to_s).toBeCloseTo(DURATION, 6);
  expect(typeof b.temperature_assumed).toBe('boolean');
  expect(b.temperature_K).toBeCloseTo(temperature_K, 2);
  const n = b.frequency_Hz.length;
  for (const k of ['angle_asd_rad_per_rtHz', 'torque_asd_Nm_per_rtHz', 'thermal_torque_asd_Nm_per_rtHz']) {
    expect(b[k].length, k).toBe(n);
    expect(b[k].every((x: unknown) => typeof x === 'number' && x > 0), k).toBe(true);
  }
  for (let i = 1; i < n; i++) expect(b.frequency_Hz[i]).toBeGreaterThan(b.frequency_Hz[i - 1]);
  // the pendulum from the windows: undamped period, Q and κ = I(2π/T₀)²
  expect(b.resonance_Hz * T0).toBeCloseTo(1, 5);
  expect(Math.abs(b.q / Q - 1)).toBeLessThan(0.05);
  expect(b.kappa_Nm_per_rad / KAPPA).toBeCloseTo(1, 4);
  // white readout noise of rms σ at f_s has the one-sided ASD √(2σ²/f_s)
  expect(Math.abs(b.readout_asd_rad_per_rtHz / Math.sqrt((2 * READOUT * READOUT) / FS) - 1)).toBeLessThan(0.1);
  // the thermal band reaches from the lowest frequency past the resonance
  expect(b.band_Hz[0]).toBe(b.frequency_Hz[0]);
  expect(b.band_Hz[1]).toBeGreaterThan(1 / T0);
  expect(Math.abs(b.excess_over_thermal - 1)).toBeLessThan(0.1);
  // Allan deviations: τ in multiples of the window step (one period), terms falling with τ
  for (const a of [b.allan.equilibrium, b.allan.period]) {
    expect(a.tau_s.length).toBeGreaterThan(5);
    expect(a.tau_s[0] / T0).toBeCloseTo(1, 3);
    a.tau_s.forEach((t: number, i: number) => expect(t / a.tau_s[0]).toBeCloseTo(2 ** i, 6));
    for (let i = 1; i < a.n.length; i++) expect(a.n[i]).toBeLessThan(a.n[i - 1]);
  }
  expect(b.allan.equilibrium.adev_rad.every((x: number) => x > 0)).toBe(true);
  expect(b.allan.period.adev.every((x: number) => x > 0)).toBe(true);
}

describe('noise on simulated thermal noise', () => {
  it('internal damping: the torque ASD the simulation was driven with, within 10 % in the thermal band; the floor within 5 %', () => {
    const { b } = json(runs.internal);
    common(b, runs.internal, 300);
    expect(b.damping).toBe('internal');
    expect(b.temperature_assumed).toBe(false); // the recorded temp_C channel
    const S = (f: number) => (4 * K_BOLTZMANN * 300 * KAPPA) / (2 * Math.PI * f * Q);
    expect(Math.abs(medianRatioInBand(b, S) - 1)).toBeLessThan(0.1);
    b.frequency_Hz.forEach((f: number, i: number) => expect(Math.abs(b.thermal_torque_asd_Nm_per_rtHz[i] / Math.sqrt(S(f)) - 1)).toBeLessThan(0.05));
  });

  it('viscous damping: the white torque 4k_BT·Iω₀/Q, measured within 10 %, the floor within 5 %; 295 K assumed without a thermometer', () => {
    const { b, stderr } = json(runs.viscous);
    common(b, runs.viscous, 295);
    expect(b.damping).toBe('viscous');
    expect(b.temperature_assumed).toBe(true);
    expect(stderr).toMatch(/295 K assumed/);
    const S = () => (4 * K_BOLTZMANN * 295 * I * ((2 * Math.PI) / T0)) / Q;
    expect(Math.abs(medianRatioInBand(b, S) - 1)).toBeLessThan(0.1);
    for (const x of b.thermal_torque_asd_Nm_per_rtHz) expect(Math.abs(x / Math.sqrt(S()) - 1)).toBeLessThan(0.05);
  });

  it('without an inertia: the torque-referred fields are null and stderr says why; angle ASD and Allan deviations remain', () => {
    const { b, stderr } = json(runs.noInertia);
    expect(Object.keys(b).sort()).toEqual([...FIELDS].sort());
    expect(b.kappa_Nm_per_rad).toBeNull();
    expect(b.torque_asd_Nm_per_rtHz).toBeNull();
    expect(b.thermal_torque_asd_Nm_per_rtHz).toBeNull();
    expect(b.band_Hz).toBeNull();
    expect(b.excess_over_thermal).toBeNull();
    expect(stderr).toMatch(/no inertia.*torque-referred fields are null/);
    expect(b.angle_asd_rad_per_rtHz.length).toBeGreaterThan(20);
    expect(b.readout_asd_rad_per_rtHz).toBeGreaterThan(0);
    expect(b.allan.equilibrium.tau_s.length).toBeGreaterThan(5);
  });

  it('--from-s and --to-s limit the span; the spectrum then starts higher', () => {
    const whole = json(runs.internal).b;
    const { b } = json(runs.internal, '--from-s', '3600', '--to-s', '7200');
    expect(b.from_s).toBeGreaterThanOrEqual(3600);
    expect(b.from_s).toBeLessThan(3600.2);
    expect(b.to_s).toBeCloseTo(7200, 6);
    expect(b.frequency_Hz[0]).toBeGreaterThan(whole.frequency_Hz[0]);
    expect(b.allan.equilibrium.n[0]).toBeLessThan(whole.allan.equilibrium.n[0]);
  });

  it('the human table gives the band, the floor, the excess, torque against thermal and the Allan deviations', () => {
    const r = noise(String(runs.internal));
    expect(r.status, r.stderr).toBe(0);
    for (const s of ['readout floor', 'thermal band', 'excess over thermal', 'torque (N·m/√Hz)', 'thermal (N·m/√Hz)', 'Allan deviation', 'equilibrium (rad)']) expect(r.stdout).toContain(s);
  });
});

describe('noise: errors', () => {
  it('an unknown run exits 1 with one line', () => {
    const r = noise('99');
    expect(r.status).toBe(1);
    expect(r.stdout).toBe('');
    expect(r.stderr).toBe('fibrewatch: run 99: no such run in this store\n');
  });

  it('a bad --from-s or --to-s exits 2 naming the flag', () => {
    const cases: [string[], RegExp][] = [
      [['--from-s', 'x'], /^fibrewatch: --from-s: must be a number of seconds ≥ 0 \(got "x"\)\n$/],
      [['--from-s', '-5'], /^fibrewatch: --from-s: /],
      [['--to-s', ''], /^fibrewatch: --to-s: /],
      [['--from-s', '100', '--to-s', '50'], /^fibrewatch: --to-s: must be after --from-s/],
      [['--from-s', '1e6'], /^fibrewatch: --from-s: run \d+ has no samples in/],
    ];
    for (const [args, msg] of cases) {
      const r = noise(String(runs.internal), ...args);
      expect(r.status, args.join(' ')).toBe(2);
      expect(r.stderr, args.join(' ')).toMatch(msg);
    }
  });

  it('no store at the path exits 1', () => {
    const r = runCli(['noise', '1', '--db', join(dir, 'absent.db')]);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/no store here/);
  });
});
