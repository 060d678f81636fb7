/**
 * The usage surface of the built CLI: exit statuses (docs/commands.md: 0 success,
 * 1 runtime failure, 2 bad usage / station / input with one line naming the
 * culprit), `import` dating and warnings, `simulate` to stdout, `ports`.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runCli, runCliAsync, type CliResult } from '../helpers/cli.js';

let dir: string;
/** a short lines recording made by `fibrewatch simulate --device -` */
let rec: string;
let scenarioFile: string;
let stationFile: string;
const DURATION_S = 300;
const RATE_Hz = 10;

/** stderr without commander's hints in parentheses ("(run with --help for usage)", "(Did you mean …?)"). */
const complaint = (r: CliResult) => r.stderr.trim().split('\n').filter((l) => !/^\((run with --help|Did you mean)/.test(l)).join('\n');

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'fw-cli-usage-'));
  scenarioFile = join(dir, 'scenario.json');
  // invented scenario: a 20 s swing read as an angle, no thermal noise
  writeFileSync(scenarioFile, JSON.stringify({
    name: 'usage', duration_s: DURATION_S, sample_rate_Hz: RATE_Hz, inertia_kg_m2: 8e-8, kappa_Nm_per_rad: 7.9e-9, q: 500,
    thermal_noise: false, angle_noise_rad: 1e-7, initial: { amplitude_rad: 0.003, phase_rad: 0, equilibrium_rad: 0 },
    sensor: { kind: 'angle' }, output: { format: 'lines', columns: ['t_s', 'angle_rad'] },
  }));
  stationFile = join(dir, 'station.json');
  writeFileSync(stationFile, JSON.stringify({
    station: 'bench-u', fibre: { name: 'W25-u', material: 'tungsten', diameter_m: 2.5e-5, length_m: 0.8 },
    pendulum: { inertia_kg_m2: 8e-8 }, input: { format: 'lines', columns: ['t_s', 'angle_rad'] }, alerts: { stderr: false },
  }));
  const sim = await runCliAsync(['simulate', '--scenario', scenarioFile, '--device', '-', '--speed', '0', '--seed', '5']);
  if (sim.status !== 0) throw new Error(`simulate failed: ${sim.stderr}`);
  rec = join(dir, 'rec.txt');
  writeFileSync(rec, sim.stdout);
}, 60_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('simulate', () => {
  it('writes the lines format to stdout: every sample, a header comment, nothing else', () => {
    const rows = runCli(['simulate', '--scenario', scenarioFile, '--device', '-', '--speed', '0', '--seed', '5', '--duration', '10']);
    expect(rows.status, rows.stderr).toBe(0);
    const lines = rows.stdout.trimEnd().split('\n');
    const data = lines.filter((l) => !l.startsWith('#'));
    expect(data.length).toBe(10 * RATE_Hz);
    expect(data[0].split(',').map(Number)[0]).toBe(0);
    for (const l of data) expect(l).toMatch(/^[-0-9.e]+,[-0-9.e]+$/);
    // the same seed gives the same bytes
    expect(rec.length).toBeGreaterThan(0);
    const again = runCli(['simulate', '--scenario', scenarioFile, '--device', '-', '--speed', '0', '--seed', '5', '--duration', '10']);
    expect(again.stdout).toBe(rows.stdout);
  });

  it('refuses a bad scenario with exit 2 naming the field', () => {
    const bad = join(dir, 'bad-scenario.json');
    writeFileSync(bad, JSON.stringify({ name: 'x', duration_s: -5, sample_rate_Hz: 10, inertia_kg_m2: 1e-7, kappa_Nm_per_rad: 1e-8, q: 10, output: { format: 'lines' } }));
    const r = runCli(['simulate', '--scenario', bad, '--device', '-', '--speed', '0']);
    expect(r.status).toBe(2);
    expect(r.stdout).toBe('');
    expect(r.stderr).toContain('duration_s');
  });
});

describe('import', () => {
  it('--started-at dates the run; --json prints the same summary as show --json, and only that', () => {
    const db = join(dir, 'dated.db');
    const r = runCli(['import', rec, '--station', stationFile, '--db', db, '--started-at', '2025-11-30T23:59:30Z', '--json']);
    expect(r.status, r.stderr).toBe(0);
    const s = JSON.parse(r.stdout);
    expect(s.started_at).toBe('2025-11-30T23:59:30.000Z');
    expect(s.samples).toBe(DURATION_S * RATE_Hz);
    expect(r.stderr).not.toMatch(/warning: no --started-at/);
    const show = runCli(['show', String(s.run), '--db', db, '--json']);
    expect(JSON.parse(show.stdout)).toEqual(s);
    // the run lies on the dates it spans: 30 s on Nov 30, the rest on Dec 1
    const on = (since: string, until: string) => JSON.parse(runCli(['runs', '--db', db, '--json', '--since', since, '--until', until]).stdout).length;
    expect(on('2025-11-30', '2025-12-01')).toBe(1);
    expect(on('2025-12-01', '2025-12-02')).toBe(1);
    expect(on('2025-12-02', '2025-12-03')).toBe(0);
  });

  it('a date-only --started-at is UTC midnight; an offset is honoured', () => {
    const db = join(dir, 'offsets.db');
    const a = JSON.parse(runCli(['import', rec, '--station', stationFile, '--db', db, '--started-at', '2026-02-01', '--json']).stdout);
    expect(a.started_at).toBe('2026-02-01T00:00:00.000Z');
    const b = JSON.parse(runCli(['import', rec, '--station', stationFile, '--db', db, '--started-at', '2026-02-01T09:30:00+02:00', '--json']).stdout);
    expect(b.started_at).toBe('2026-02-01T07:30:00.000Z');
    expect(b.run).toBe(a.run + 1);
  });

  it('without --started-at: warns on stderr and dates the run now minus its duration', () => {
    const db = join(dir, 'undated.db');
    const before = Date.now();
    const r = runCli(['import', rec, '--station', stationFile, '--db', db, '--json']);
    const after = Date.now();
    expect(r.status, r.stderr).toBe(0);
    expect(r.stderr).toMatch(/warning: no --started-at/);
    const s = JSON.parse(r.stdout);
    const last_s = DURATION_S - 1 / RATE_Hz;
    const start = Date.parse(s.started_at);
    expect(start).toBeGreaterThanOrEqual(before - last_s * 1000 - 1);
    expect(start).toBeLessThanOrEqual(after - last_s * 1000 + 1);
  });

  it('prints a readable summary by default', () => {
    const r = runCli(['import', rec, '--station', stationFile, '--db', join(dir, 'human.db'), '--started-at', '2026-01-01T00:00:00Z']);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/^Run 1 · station bench-u · fibre W25-u · complete\n/);
    expect(r.stdout).toMatch(/period\s+19\.\d+ ± 0\.\d+ s/);
    expect(r.stdout).toMatch(/G\s+\d+(\.\d+)? ± \d+(\.\d+)? GPa/);
  });

  it('a bad station file: exit 2 naming the field, and no store is made', async () => {
    const cases: [unknown, string][] = [
      [{ station: 'x', fibre: { name: 'f', diameter_m: -1 } }, 'fibre.diameter_m: must be > 0'],
      [{ station: 'x', fibre: { name: 'f' }, analysis: { window_periods: 2, step_periods: 3 } }, 'analysis.step_periods'],
      [{ station: 'x', fibre: { name: 'f' }, input: { format: 'frames' } }, 'input.channels'],
      [{ station: 'x', fibre: { name: 'f' }, sensor: { kind: 'encoder' } }, 'sensor.counts_per_rev'],
      [{ station: 'x', fibre: { name: 'f', diameter: 1 } }, 'fibre.diameter: unknown field'],
      [{ fibre: { name: 'f' } }, 'station: is required'],
    ];
    const db = join(dir, 'never.db');
    const rs = await Promise.all(cases.map(([st], i) => {
      const f = join(dir, `bad-station-${i}.json`);
      writeFileSync(f, JSON.stringify(st));
      return runCliAsync(['import', rec, '--station', f, '--db', db]);
    }));
    for (const [i, [, msg]] of cases.entries()) {
      expect(rs[i].status, msg).toBe(2);
      expect(rs[i].stdout).toBe('');
      expect(rs[i].stderr.trim().split('\n')).toHaveLength(1);
      expect(rs[i].stderr).toContain(`bad-station-${i}.json: ${msg}`);
    }
    expect(existsSync(db)).toBe(false);
  });

  it('a station file that is not JSON or not there: exit 2 naming the file', () => {
    const broken = join(dir, 'broken.json');
    writeFileSync(broken, '{"station": ');
    const r = runCli(['import', rec, '--station', broken, '--db', join(dir, 'never2.db')]);
    expect(r.status).toBe(2);
    expect(r.stderr).toContain('broken.json: not valid JSON');
    const m = runCli(['import', rec, '--station', join(dir, 'absent.json'), '--db', join(dir, 'never2.db')]);
    expect(m.status).toBe(2);
    expect(m.stderr).toContain('absent.json');
  });

  it('a bad --started-at or a missing input file: exit 2 naming it', () => {
    const r = runCli(['import', rec, '--station', stationFile, '--db', join(dir, 'never3.db'), '--started-at', 'last tuesday']);
    expect(r.status).toBe(2);
    expect(r.stderr).toContain('--started-at');
    const m = runCli(['import', join(dir, 'absent.txt'), '--station', stationFile, '--db', join(dir, 'never3.db')]);
    expect(m.status).toBe(2);
    expect(m.stderr).toContain('absent.txt');
    expect(existsSync(join(dir, 'never3.db'))).toBe(false);
  });

  it('a frames file with a dropout: one gap, timed on the run\'s clock (also when the whole file is one read)', async () => {
    const sc = join(dir, 'frames-scenario.json');
    // invented: 400 s of frames with a 20 s dropout at 200 s; small enough to be decoded from a single read
    writeFileSync(sc, JSON.stringify({
      name: 'frames-gap', duration_s: 400, sample_rate_Hz: 10, inertia_kg_m2: 8e-8, kappa_Nm_per_rad: 7.9e-9, q: 500, thermal_noise: false,
      initial: { amplitude_rad: 0.003 }, dropouts: [{ t_s: 200, duration_s: 20 }],
      output: { format: 'frames', channels: [{ role: 'angle_rad', scale: 1e-9 }] },
    }));
    const bin = join(dir, 'frames-gap.bin');
    const sim = runCli(['simulate', '--scenario', sc, '--device', bin, '--speed', '0', '--seed', '2']);
    expect(sim.status, sim.stderr).toBe(0);
    const st = join(dir, 'station-frames.json');
    writeFileSync(st, JSON.stringify({ station: 'bench-f', fibre: { name: 'f' }, input: { format: 'frames', channels: [{ role: 'angle_rad', scale: 1e-9 }] }, alerts: { stderr: false } }));
    const db = join(dir, 'frames.db');
    const imp = runCli(['import', bin, '--station', st, '--db', db, '--started-at', '2026-01-01T00:00:00Z', '--json']);
    expect(imp.status, imp.stderr).toBe(0);
    const evs = JSON.parse(runCli(['events', '1', '--db', db, '--json']).stdout) as { kind: string; t_s: number; t: string }[];
    const gaps = evs.filter((e) => e.kind === 'gap');
    expect(gaps).toHaveLength(1);
    expect(Math.abs(gaps[0].t_s - 200)).toBeLessThan(1);
    expect(gaps[0].t.startsWith('2026-01-01T00:03:')).toBe(true);
    expect(JSON.parse(imp.stdout).gaps).toBe(1);
  });

  it('a run too short for a window: show, windows and export say so plainly', () => {
    const short = join(dir, 'short.txt');
    writeFileSync(short, readFileSync(rec, 'utf8').split('\n').slice(0, 60).join('\n') + '\n');
    const db = join(dir, 'short.db');
    const imp = runCli(['import', short, '--station', stationFile, '--db', db, '--started-at', '2026-01-01T00:00:00Z', '--json']);
    expect(imp.status, imp.stderr).toBe(0);
    const s = JSON.parse(imp.stdout);
    expect(s.windows).toBe(0);
    expect(s.period_s).toBeNull();
    const human = runCli(['windows', '1', '--db', db]);
    expect(human.status).toBe(0);
    expect(human.stdout).toBe('');
    expect(human.stderr).toMatch(/no windows yet/);
    expect(JSON.parse(runCli(['windows', '1', '--db', db, '--json']).stdout)).toEqual([]);
    const header = runCli(['windows', '1', '--db', db, '--csv']).stdout.trimEnd().split('\n');
    expect(header).toHaveLength(1);
    expect(header[0].split(',')).toContain('period_sigma_s');
    expect(runCli(['export', '1', '--what', 'windows', '--format', 'csv', '--db', db]).stdout).toBe(header[0] + '\n');
    expect(runCli(['show', '1', '--db', db]).stdout).toMatch(/period\s+—\n/);
  });

  it('a file that decodes to no samples: exit 2, and no empty run is left in the store', () => {
    const db = join(dir, 'nothing.db');
    const ok = runCli(['import', rec, '--station', stationFile, '--db', db, '--started-at', '2026-01-01T00:00:00Z', '--json']);
    expect(ok.status).toBe(0);
    const junk = join(dir, 'junk.txt');
    writeFileSync(junk, 'temperature is fine\nno numbers here\n');
    const other = join(dir, 'station-other.json');
    writeFileSync(other, JSON.stringify({ station: 'bench-v', fibre: { name: 'never-used' }, input: { columns: ['t_s', 'angle_rad'] } }));
    const r = runCli(['import', junk, '--station', other, '--db', db, '--started-at', '2026-01-02T00:00:00Z']);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/junk\.txt: no samples decoded/);
    const runs = JSON.parse(runCli(['runs', '--db', db, '--json']).stdout);
    expect(runs.map((x: { run: number }) => x.run)).toEqual([1]);
    // its fibre and station are not left behind either
    expect(JSON.parse(runCli(['fibres', '--db', db, '--json']).stdout).map((f: { name: string }) => f.name)).toEqual(['W25-u']);
  });
});

describe('exit statuses of bad usage', () => {
  it('unknown flags, missing or bad option values and unknown commands exit 2 with one complaint', async () => {
    const db = join(dir, 'usage.db');
    const cases = [
      ['runs', '--bogus', '--db', db],
      ['show', '1', '--jsn', '--db', db],
      ['export', '1', '--db', db],
      ['export', '1', '--what', 'everything', '--db', db],
      ['export', '1', '--what', 'samples', '--format', 'xml', '--db', db],
      ['runs', '--db'],
      ['import', rec],
      ['no-such-command'],
      ['simulate', '--scenario', scenarioFile, '--device', '-', '--speed', 'fast'],
    ];
    const rs = await Promise.all(cases.map((a) => runCliAsync(a)));
    for (const [i, a] of cases.entries()) {
      expect(rs[i].status, `${a.join(' ')}: ${rs[i].stderr}`).toBe(2);
      expect(rs[i].stdout).toBe('');
      expect(complaint(rs[i]).split('\n')).toHaveLength(1);
    }
    expect(complaint(rs[0])).toContain('--bogus');
    expect(complaint(rs[2])).toContain('--what');
    expect(complaint(rs[4])).toContain('xml');
    expect(complaint(rs[8])).toContain('--speed');
  });

  it('--help and --version exit 0', () => {
    const h = runCli(['--help']);
    expect(h.status).toBe(0);
    for (const c of ['demo', 'fit', 'record', 'import', 'simulate', 'runs', 'show', 'windows', 'events', 'fibres', 'fibre', 'export', 'report', 'check', 'ports']) {
      expect(h.stdout).toMatch(new RegExp(`^\\s+${c}\\b`, 'm'));
    }
    expect(runCli(['runs', '--help']).status).toBe(0);
    expect(runCli(['--version']).stdout.trim()).toMatch(/^\d+\.\d+\.\d+/);
  });
});

describe('ports', () => {
  it('--json is an array of devices with the path to use', () => {
    const r = runCli(['ports', '--json']);
    expect(r.status, r.stderr).toBe(0);
    const ports = JSON.parse(r.stdout) as { path: string; kind: string; use: string }[];
    expect(Array.isArray(ports)).toBe(true);
    for (const p of ports) {
      expect(p.path).toMatch(/^\/dev\//);
      expect(p.use).toMatch(/^\/dev\//);
      expect(typeof p.kind).toBe('string');
    }
    const human = runCli(['ports']);
    expect(human.status).toBe(0);
    if (ports.length) expect(human.stdout).toContain(ports[0].path);
    else expect(human.stderr).toMatch(/no serial devices/);
  });
});
