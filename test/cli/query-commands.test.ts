/**
 * The query commands of the built CLI (runs, show, windows, events, export,
 * fibres, fibre, report) against a real store made by `fibrewatch import` of
 * three simulated recordings (test/cli/store-fixture.ts). Field names and
 * semantics are docs/commands.md's.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, rmSync, existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runCli, runCliAsync, type CliResult } from '../helpers/cli.js';
import { buildStore, INERTIA_SIGMA_REL, W25_SIGMAS, W25, type FixtureRun } from './store-fixture.js';
import { WINDOW_COLUMNS } from '../../src/cli/commands/windows.js';

let dir: string;
let db: string;
let runs: FixtureRun[];

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'fw-cli-query-'));
  ({ db, runs } = await buildStore(dir));
}, 120_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const cli = (...args: string[]): CliResult => runCli([...args, '--db', db]);

const memo = new Map<string, string>();
/** Run a --json command (once per argument list; the store does not change): exit 0 and stdout is exactly one JSON document. */
function json<T = any>(...args: string[]): T {
  const key = args.join('\0');
  if (!memo.has(key)) {
    const r = cli(...args, '--json');
    expect(r.status, r.stderr).toBe(0);
    memo.set(key, r.stdout);
  }
  return JSON.parse(memo.get(key)!) as T;
}

/** `runs ARGS --json` for many argument lists at once (child processes in parallel): the run numbers of each. */
async function runNumbersOf(cases: string[][]): Promise<number[][]> {
  const rs = await Promise.all(cases.map((a) => runCliAsync(['runs', ...a, '--json', '--db', db])));
  return rs.map((r, i) => {
    expect(r.status, `${cases[i].join(' ')}: ${r.stderr}`).toBe(0);
    return (JSON.parse(r.stdout) as { run: number }[]).map((x) => x.run);
  });
}

/** Many commands at once against the store (child processes in parallel). */
const many = (cases: string[][]): Promise<CliResult[]> => Promise.all(cases.map((a) => runCliAsync([...a, '--db', db])));

/** Check each [args, expected runs] pair. */
async function expectRuns(table: [string[], number[]][]): Promise<void> {
  const got = await runNumbersOf(table.map(([a]) => a));
  table.forEach(([a, want], i) => expect(got[i], a.join(' ')).toEqual(want));
}

/** Fields of `fit --json` (docs/commands.md) that a window row also carries. */
const FIT_FIELDS = [
  'samples', 't_mid_s', 'period_s', 'period_sigma_s', 'decay_time_s', 'decay_time_sigma_s', 'q', 'q_sigma',
  'amplitude_rad', 'amplitude_sigma_rad', 'equilibrium_rad', 'equilibrium_sigma_rad', 'drift_rad_per_s',
  'drift_sigma_rad_per_s', 'phase_rad', 'residual_rms_rad', 'chi2_red',
];

/** Damped period of the simulated oscillator: ω_d = ω₀·√(1 − 1/(4Q²)), ω₀ = √(κ/I) (standard result). */
const dampedPeriod = (I: number, kappa: number, q: number) => (2 * Math.PI) / (Math.sqrt(kappa / I) * Math.sqrt(1 - 1 / (4 * q * q)));

describe('runs', () => {
  it('lists every run as a JSON array with the CONTRACT fields, oldest first', () => {
    const rows = json<Record<string, unknown>[]>('runs');
    expect(rows.map((r) => r.run)).toEqual([1, 2, 3]);
    for (const [i, r] of rows.entries()) {
      for (const k of ['run', 'station', 'fibre', 'started_at', 'ended_at', 'samples', 'status']) expect(r, k).toHaveProperty(k);
      expect(r.station).toBe(runs[i].station);
      expect(r.fibre).toBe(runs[i].fibre);
      // import --started-at puts the run on that date
      expect(r.started_at).toBe(runs[i].started_at);
      expect(r.status).toBe('complete');
      // the run ends at its last sample: one sample interval short of the simulated length
      const len = (Date.parse(r.ended_at as string) - Date.parse(r.started_at as string)) / 1000;
      expect(len).toBeCloseTo(runs[i].duration_s - 1 / runs[i].sample_rate_Hz, 2);
    }
    // samples: what was recorded, less the dropout of run 1
    expect(rows[1].samples).toBe(runs[1].duration_s * runs[1].sample_rate_Hz);
    expect(rows[2].samples).toBe(runs[2].duration_s * runs[2].sample_rate_Hz);
    const lost = runs[0].dropouts.reduce((s, d) => s + d.duration_s * runs[0].sample_rate_Hz, 0);
    expect(Math.abs((rows[0].samples as number) - (runs[0].duration_s * runs[0].sample_rate_Hz - lost))).toBeLessThanOrEqual(2);
  });

  it('filters by fibre and station', async () => {
    await expectRuns([
      [['--fibre', W25.name], [1, 3]],
      [['--fibre', 'QZ-b'], [2]],
      [['--station', 'bench-a'], [1, 3]],
      [['--station', 'bench-b'], [2]],
      [['--station', 'bench-a', '--fibre', W25.name], [1, 3]],
      [['--station', 'bench-b', '--fibre', W25.name], []],
      [['--fibre', 'no-such-fibre'], []],
    ]);
  });

  it('--since/--until with dates: overlap, since inclusive, until exclusive', async () => {
    await expectRuns([
      // run 2 spans midnight 2026-03-05/06: it overlaps both days
      [['--since', '2026-03-06'], [2, 3]],
      [['--until', '2026-03-06'], [1, 2]],
      [['--since', '2026-03-06', '--until', '2026-03-07'], [2]],
      [['--since', '2026-03-01', '--until', '2026-03-02'], [1]],
      [['--since', '2026-03-11'], []],
      [['--until', '2026-03-01'], []],
      // until is exclusive: a run starting exactly at --until is left out, a day later it is in
      [['--since', '2026-03-07', '--until', '2026-03-10'], []],
      [['--since', '2026-03-07', '--until', '2026-03-11'], [3]],
    ]);
  });

  it('--since/--until with full ISO times, to the millisecond, with offsets', async () => {
    const end1 = json<{ ended_at: string }[]>('runs')[0].ended_at;
    await expectRuns([
      // until exclusive at run 1's start; since inclusive at run 1's end
      [['--until', '2026-03-01T10:00:00Z'], []],
      [['--until', '2026-03-01T10:00:00.001Z'], [1]],
      [['--since', end1, '--until', '2026-03-02'], [1]],
      [['--since', new Date(Date.parse(end1) + 1).toISOString(), '--until', '2026-03-02'], []],
      // a stretch inside run 2, after midnight
      [['--since', '2026-03-06T00:05:00Z', '--until', '2026-03-06T00:06:00Z'], [2]],
      // the same instant with an offset: 01:00 at +01:00 is midnight UTC
      [['--since', '2026-03-06T01:00:00+01:00'], [2, 3]],
      // a time without an offset is UTC
      [['--since', '2026-03-10T08:14:59.9'], [3]],
      [['--since', '2026-03-10T08:15'], []],
    ]);
  });

  it('refuses a bad --since/--until with exit 2 naming the flag', async () => {
    const cases = [['--since', '2026-02-30'], ['--since', 'yesterday'], ['--until', '2026-13-01'], ['--until', '03/06/2026'],
      // an empty span is a mistake, not a question
      ['--since', '2026-03-06', '--until', '2026-03-06'], ['--since', '2026-03-07', '--until', '2026-03-06T12:00:00Z']];
    const rs = await many(cases.map((c) => ['runs', ...c, '--json']));
    for (const [i, c] of cases.entries()) {
      const r = rs[i];
      expect(r.status, c.join(' ')).toBe(2);
      expect(r.stdout).toBe('');
      expect(r.stderr).toContain(c.length === 2 ? c[0] : '--until');
      expect(r.stderr.trim().split('\n')).toHaveLength(1);
    }
  });

  it('prints an aligned table with ISO UTC times, and nothing on stdout when nothing matches', () => {
    const r = cli('runs');
    expect(r.status).toBe(0);
    const lines = r.stdout.trimEnd().split('\n');
    expect(lines).toHaveLength(2 + 3);
    expect(lines[0]).toMatch(/^run\s+station\s+fibre/);
    // columns line up: every row's second column starts where the header's does
    const col = lines[0].indexOf('station');
    for (const l of lines.slice(2)) expect(l.slice(col)).toMatch(/^bench-[ab] /);
    expect(lines[2]).toContain('2026-03-01T10:00:00Z');
    const none = cli('runs', '--fibre', 'no-such-fibre');
    expect(none.status).toBe(0);
    expect(none.stdout).toBe('');
    expect(none.stderr).toMatch(/no runs/);
  });
});

describe('show', () => {
  it('has every CONTRACT field, κ and G where the station gives inertia and fibre geometry', () => {
    for (const fr of runs) {
      const s = json<Record<string, any>>('show', String(fr.run));
      for (const k of ['run', 'station', 'fibre', 'started_at', 'ended_at', 'samples', 'windows', 'gaps', 'period_s', 'period_sigma_s', 'q',
        'equilibrium_rate_rad_per_s', 'equilibrium_rate_sigma_rad_per_s', 'events']) expect(s, `run ${fr.run}: ${k}`).toHaveProperty(k);
      expect(s.run).toBe(fr.run);
      expect(s.started_at).toBe(fr.started_at);
      expect(typeof s.windows).toBe('number');
      expect(s.windows).toBeGreaterThan(10);
      expect(s.period_sigma_s).toBeGreaterThan(0);
      if (fr.hasInertia) {
        expect(s.kappa_Nm_per_rad).toBeGreaterThan(0);
        expect(s.kappa_sigma_Nm_per_rad).toBeGreaterThan(0);
      } else {
        expect(s.kappa_Nm_per_rad ?? null).toBeNull();
      }
      if (fr.hasGeometry && fr.hasInertia) {
        // docs/commands.md: G = 32·κ·L/(π·d⁴) (torsion of a round bar, textbook result)
        const G = (32 * s.kappa_Nm_per_rad * W25.length_m) / (Math.PI * W25.diameter_m ** 4);
        expect(s.shear_modulus_Pa / G).toBeCloseTo(1, 9);
      } else {
        expect(s.shear_modulus_Pa ?? null).toBeNull();
      }
      // the counts agree with the other commands
      expect(s.events).toBe(json<unknown[]>('events', String(fr.run)).length);
      expect(s.windows).toBe(json<unknown[]>('windows', String(fr.run)).length);
    }
  });

  it('reports the simulated truth for the quiet run (period, κ, Q)', () => {
    const fr = runs[2];
    const s = json<Record<string, number>>('show', '3');
    // the simulator's inputs are the truth here (no thermal noise; readout noise only)
    expect(s.period_s / dampedPeriod(fr.inertia_kg_m2, fr.kappa_Nm_per_rad, 800)).toBeCloseTo(1, 6);
    expect(s.kappa_Nm_per_rad / fr.kappa_Nm_per_rad).toBeCloseTo(1, 5);
    expect(s.q).toBeGreaterThan(790);
    expect(s.q).toBeLessThan(810);
    expect(s.gaps).toBe(0);
  });

  it('adds the hand-measured uncertainties once: total and statistical σ, the budget, the corrections applied', () => {
    // run 3's station: σ_I/I = 0.4 %, σ_d/d = 1 %, σ_L = 1 mm (store-fixture.ts); the stations are stored per name,
    // so run 1 (same station) is summarised with them too
    const s = json<Record<string, any>>('show', '3');
    expect(s.kappa_sigma_stat_Nm_per_rad).toBeGreaterThan(0);
    // direct propagation: statistical σ of the mean and κ·σ_I/I, in quadrature
    expect(s.kappa_sigma_Nm_per_rad / Math.hypot(s.kappa_sigma_stat_Nm_per_rad, INERTIA_SIGMA_REL * s.kappa_Nm_per_rad)).toBeCloseTo(1, 9);
    expect(s.kappa_sigma_budget.inertia).toBeCloseTo(INERTIA_SIGMA_REL, 12);
    // G: 4·σ_d/d, σ_L/L and σ_I/I (no load: exactly the textbook exponents)
    const rel = Math.hypot(INERTIA_SIGMA_REL, (4 * W25_SIGMAS.diameter_sigma_m) / W25.diameter_m, W25_SIGMAS.length_sigma_m / W25.length_m);
    expect(s.shear_modulus_sigma_Pa / Math.hypot(s.shear_modulus_sigma_stat_Pa, rel * s.shear_modulus_Pa)).toBeCloseTo(1, 6);
    expect(s.shear_modulus_sigma_budget.diameter).toBeCloseTo(0.04, 7);
    expect(s).toMatchObject({ damping: 'internal', tension_N: null, tension_share_ppm: null, temperature_K: 295, temperature_source: 'assumed' });
    expect(s.decay_rate_per_s).toBeGreaterThan(10 * s.decay_rate_sigma_per_s);
    // run 1 records temp_C: the thermal term uses its mean temperature
    expect(json<Record<string, any>>('show', '1').temperature_source).toBe('recorded');
    const r = cli('show', '3');
    expect(r.stdout).toMatch(/κ\s+.*N·m\/rad\s+σ: inertia 0\.4 % dominates \(statistical [\d.e-]+ %\)/);
    expect(r.stdout).toMatch(/G\s+.*GPa\s+σ: diameter 4 % dominates \(statistical [\d.e-]+ %, inertia 0\.4 %, length 0\.1[23] %\)/);
    expect(r.stdout).toMatch(/corrections\s+T₀ for internal damping .*no tension term .*thermal wander in σ_Q at 295 K \(assumed\)/);
  });

  it('counts the gap and the alerts of run 1', () => {
    const s = json<Record<string, number>>('show', '1');
    expect(s.gaps).toBe(1);
    expect(s.events).toBeGreaterThanOrEqual(3);
    // the creep: equilibrium rising throughout
    expect(s.equilibrium_rate_rad_per_s).toBeGreaterThan(10 * s.equilibrium_rate_sigma_rad_per_s);
  });

  it('prints a readable summary with units and ISO times', () => {
    const r = cli('show', '1');
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/^Run 1 /);
    expect(r.stdout).toContain('2026-03-01T10:00:00Z');
    expect(r.stdout).toMatch(/period\s+\d+\.\d+ ± 0\.\d+ s\n/);
    expect(r.stdout).toMatch(/κ\s+.*N·m\/rad/);
    expect(r.stdout).toMatch(/G\s+.*GPa/);
    expect(r.stdout).toMatch(/equilibrium\s+.*rad\/h/);
    // the run's length is the span from start to end
    expect(r.stdout).toContain('(00:40:00)');
    expect(r.stdout).not.toMatch(/\d\.\d{3}Z/);
    // run 2 has no inertia: no κ line
    expect(cli('show', '2').stdout).not.toContain('κ');
  });
});

describe('windows', () => {
  it('--json rows carry the fit fields, t_mid (ISO) and status', () => {
    const ws = json<Record<string, any>[]>('windows', '1');
    expect(ws.length).toBeGreaterThan(50);
    const t0 = Date.parse(runs[0].started_at);
    for (const w of ws) {
      for (const k of [...FIT_FIELDS, 'status', 't_mid']) expect(w, k).toHaveProperty(k);
      expect(w.status).toBe('ok');
      expect(Math.abs(Date.parse(w.t_mid) - (t0 + w.t_mid_s * 1000))).toBeLessThanOrEqual(1);
      expect(w.t_mid).toMatch(/^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d(\.\d+)?Z$/);
      expect(w.kappa_Nm_per_rad).toBeGreaterThan(0);
    }
    // windows are in time order
    for (let i = 1; i < ws.length; i++) expect(ws[i].t_mid_s).toBeGreaterThan(ws[i - 1].t_mid_s);
    // no κ where the station has no inertia
    for (const w of json<Record<string, any>[]>('windows', '2')) expect(w.kappa_Nm_per_rad ?? null).toBeNull();
  });

  it('--csv has the same columns and rows as --json', () => {
    const ws = json<Record<string, any>[]>('windows', '3');
    const r = cli('windows', '3', '--csv');
    expect(r.status).toBe(0);
    const lines = r.stdout.trimEnd().split('\n');
    const header = lines[0].split(',');
    expect(header).toEqual(Object.keys(ws[0]));
    // the header a run without windows gets is the same
    expect(header).toEqual(WINDOW_COLUMNS);
    expect(lines.length - 1).toBe(ws.length);
    const iP = header.indexOf('period_s');
    const iT = header.indexOf('t_mid');
    lines.slice(1).forEach((l, i) => {
      const cells = l.split(',');
      expect(Number(cells[iP])).toBe(ws[i].period_s);
      expect(cells[iT]).toBe(ws[i].t_mid);
    });
  });

  it('prints a table with units in the headers', () => {
    const r = cli('windows', '3');
    expect(r.status).toBe(0);
    const lines = r.stdout.trimEnd().split('\n');
    expect(lines[0]).toMatch(/t_mid \(UTC\)/);
    expect(lines[0]).toMatch(/period/);
    expect(lines.length).toBe(2 + json<unknown[]>('windows', '3').length);
    expect(lines[2]).toMatch(/ ok /);
    expect(lines[2]).toMatch(/\d+\.\d+ ± \d\.\d+ s/);
  });
});

describe('events', () => {
  it('--json items have {t, t_s, kind, severity, message, value, threshold}', () => {
    const evs = json<Record<string, any>[]>('events', '1');
    const t0 = Date.parse(runs[0].started_at);
    for (const e of evs) {
      for (const k of ['t', 't_s', 'kind', 'severity', 'message', 'value', 'threshold']) expect(e, k).toHaveProperty(k);
      expect(Math.abs(Date.parse(e.t) - (t0 + e.t_s * 1000))).toBeLessThanOrEqual(1);
      expect(['equilibrium-drift', 'period-drift', 'no-data', 'gap', 'reconnect', 'bad-input', 'saturation', 'amplitude-low', 'amplitude-limit']).toContain(e.kind);
      expect(typeof e.message).toBe('string');
    }
    const kinds = evs.map((e) => e.kind);
    expect(kinds).toContain('gap');
    expect(kinds).toContain('period-drift');
    expect(kinds).toContain('equilibrium-drift');
    // the gap is the scenario's dropout: at 600 s, 30 s long
    const gap = evs.find((e) => e.kind === 'gap')!;
    const d = runs[0].dropouts[0];
    expect(Math.abs(gap.t_s - d.t_s)).toBeLessThan(1);
    expect(Math.abs(gap.value - d.duration_s)).toBeLessThan(1);
    // the period step is at 1500 s: the alert comes after it
    expect(evs.find((e) => e.kind === 'period-drift')!.t_s).toBeGreaterThan(1500);
    expect(json<unknown[]>('events', '3')).toEqual([]);
  });

  it('prints a table with ISO times and units on values', () => {
    const r = cli('events', '1');
    expect(r.status).toBe(0);
    const lines = r.stdout.trimEnd().split('\n');
    expect(lines[0]).toMatch(/^time \(UTC\)/);
    const gapLine = lines.find((l) => / gap /.test(l))!;
    expect(gapLine).toMatch(/^2026-03-01T10:09:5\dZ/);
    expect(gapLine).toMatch(/30\.\d+ s/);
    expect(lines.find((l) => /period-drift/.test(l))).toMatch(/\d+ ppm/);
    expect(lines.find((l) => /equilibrium-drift/.test(l))).toMatch(/rad\/h/);
    const none = cli('events', '3');
    expect(none.status).toBe(0);
    expect(none.stdout).toBe('');
    expect(none.stderr).toMatch(/no events/);
  });
});

describe('export', () => {
  /** The source file's data rows: [t_s, angle_rad]. */
  const sourceRows = (file: string) => readFileSync(file, 'utf8').split('\n').filter((l) => l && !l.startsWith('#')).map((l) => l.split(',').map(Number));

  it('samples as CSV: one row per stored sample, values as in the source file to float32 precision', () => {
    const r = cli('export', '1', '--what', 'samples', '--format', 'csv');
    expect(r.status, r.stderr).toBe(0);
    const lines = r.stdout.trimEnd().split('\n');
    const header = lines[0].split(',');
    expect(header.slice(0, 2)).toEqual(['t_s', 'angle_rad']);
    const rows = lines.slice(1).map((l) => l.split(',').map(Number));
    expect(rows.length).toBe(json<{ samples: number }>('show', '1').samples);
    const src = sourceRows(runs[0].file);
    expect(rows.length).toBe(src.length);
    const vmax = Math.max(...src.map((s) => Math.abs(s[1])));
    const iTemp = header.indexOf('temp_C');
    expect(iTemp).toBeGreaterThan(0);
    let worst = 0;
    for (let i = 0; i < rows.length; i++) {
      expect(Math.abs(rows[i][0] - src[i][0])).toBeLessThan(1e-6);
      worst = Math.max(worst, Math.abs(rows[i][1] - src[i][1]));
      expect(Math.abs(rows[i][iTemp] - src[i][2])).toBeLessThan(2 ** -23 * 30);
    }
    // float32 keeps 24 bits of mantissa: relative spacing 2^-23 (IEEE 754 binary32)
    expect(worst).toBeLessThanOrEqual(2 ** -23 * vmax);
  });

  it('samples as JSON to a file: the same rows, nothing on stdout', () => {
    const out = join(dir, 'samples-3.json');
    const r = cli('export', '3', '--what', 'samples', '--format', 'json', '--out', out);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toBe('');
    const rows = JSON.parse(readFileSync(out, 'utf8')) as { t_s: number; angle_rad: number }[];
    const src = sourceRows(runs[2].file);
    expect(rows.length).toBe(src.length);
    expect(rows.length).toBe(json<{ samples: number }>('show', '3').samples);
    expect(rows[100].t_s).toBeCloseTo(src[100][0], 6);
    expect(Math.abs(rows[100].angle_rad - src[100][1])).toBeLessThanOrEqual(2 ** -23 * 5e-3);
  });

  it('samples of a frames run: one row per sample, angles in radians (raw counts × scale)', () => {
    const r = cli('export', '2', '--what', 'samples', '--format', 'csv');
    expect(r.status).toBe(0);
    const rows = r.stdout.trimEnd().split('\n').slice(1).map((l) => l.split(',').map(Number));
    expect(rows.length).toBe(runs[1].duration_s * runs[1].sample_rate_Hz);
    // the swing the scenario started with (4 mrad), not counts or micro-radians
    const peak = Math.max(...rows.slice(0, 300).map((x) => Math.abs(x[1] - 1e-3)));
    expect(peak).toBeGreaterThan(3.5e-3);
    expect(peak).toBeLessThan(4.5e-3);
    expect(rows[1][0] - rows[0][0]).toBeCloseTo(1 / runs[1].sample_rate_Hz, 6);
  });

  it('windows and events as JSON equal the windows/events commands; as CSV they have a header and a row each', () => {
    const wj = JSON.parse(cli('export', '1', '--what', 'windows', '--format', 'json').stdout);
    expect(wj).toEqual(json('windows', '1'));
    const ej = JSON.parse(cli('export', '1', '--what', 'events', '--format', 'json').stdout);
    expect(ej).toEqual(json('events', '1'));
    const ec = cli('export', '1', '--what', 'events', '--format', 'csv').stdout.trimEnd().split('\n');
    expect(ec[0].split(',').slice(0, 7)).toEqual(['t', 't_s', 'kind', 'severity', 'message', 'value', 'threshold']);
    expect(ec.length - 1).toBe(ej.length);
    const wc = cli('export', '1', '--what', 'windows', '--format', 'csv').stdout;
    expect(wc).toBe(cli('windows', '1', '--csv').stdout);
  });

  it('an empty export still has its header', () => {
    const r = cli('export', '3', '--what', 'events', '--format', 'csv');
    expect(r.status).toBe(0);
    expect(r.stdout.trimEnd().split('\n')).toEqual(['t,t_s,kind,severity,message,value,threshold,state,data']);
    expect(JSON.parse(cli('export', '3', '--what', 'events', '--format', 'json').stdout)).toEqual([]);
  });

  it('fails with exit 1 naming the file when --out cannot be written', () => {
    const r = cli('export', '1', '--what', 'windows', '--format', 'csv', '--out', join(dir, 'no-such-dir', 'w.csv'));
    expect(r.status).toBe(1);
    expect(r.stderr).toContain('no-such-dir');
    expect(r.stderr).not.toMatch(/\n\s+at /);
  });
});

describe('fibres and fibre', () => {
  it('fibres --json lists both fibres with geometry and run counts', () => {
    const fs = json<Record<string, any>[]>('fibres');
    expect(fs.map((f) => f.name).sort()).toEqual(['QZ-b', W25.name].sort());
    const w = fs.find((f) => f.name === W25.name)!;
    expect(w).toMatchObject({ material: 'tungsten', diameter_m: W25.diameter_m, length_m: W25.length_m, runs: 2 });
    expect(w.first_run).toBe(runs[0].started_at);
    expect(w.last_run).toBe(runs[2].started_at);
    expect(fs.find((f) => f.name === 'QZ-b')!.runs).toBe(1);
  });

  it('fibre NAME --json: a row per run, κ moved between runs 1 and 3', () => {
    const rows = json<Record<string, any>[]>('fibre', W25.name);
    expect(rows.map((r) => r.run)).toEqual([1, 3]);
    for (const r of rows) for (const k of ['period_s', 'kappa_Nm_per_rad', 'shear_modulus_Pa', 'q', 'equilibrium_rate_rad_per_s', 'kappa_moved']) expect(r, k).toHaveProperty(k);
    expect(rows[0].kappa_moved).toBeNull();
    // run 3's κ is 1 % above run 1's baseline: far beyond the uncertainty
    expect(rows[1].kappa_moved).toBe(true);
    expect(rows[1].kappa_Nm_per_rad).toBeGreaterThan(rows[0].kappa_Nm_per_rad);
    // no inertia on bench-b: no κ, nothing to compare
    const qz = json<Record<string, any>[]>('fibre', 'QZ-b');
    expect(qz).toHaveLength(1);
    expect(qz[0].kappa_Nm_per_rad).toBeNull();
    expect(qz[0].kappa_moved).toBeNull();
  });

  it('fibre of an unknown name fails with exit 1', () => {
    const r = cli('fibre', 'no-such-fibre');
    expect(r.status).toBe(1);
    expect(r.stderr).toContain('no-such-fibre');
  });

  it('prints tables with units in the headers and ISO times', () => {
    const f = cli('fibres');
    expect(f.status).toBe(0);
    expect(f.stdout).toMatch(/d or w × t \(µm\)/);
    expect(f.stdout).toMatch(/\b25\b/);
    expect(f.stdout).toContain('2026-03-01T10:00:00Z');
    const h = cli('fibre', W25.name);
    expect(h.status).toBe(0);
    expect(h.stdout).toMatch(/κ \(N·m\/rad\)/);
    expect(h.stdout).toMatch(/G \(GPa\)/);
    // run 3's σ's: κ mostly from the inertia (0.4 %), G from the diameter (4 × 1 %)
    expect(h.stdout).toMatch(/σ mostly from/);
    // κ moved (the 1 % step of the scenarios), Q did not
    expect(h.stdout).toMatch(/2026-03-10T08:00:00Z .* yes\s+no\s+κ: inertia, G: diameter\s*$/m);
    expect(h.stdout).toMatch(/^run 3: kappa-moved: κ rose by 1\.\d+ % since run 1/m);
  });
});

describe('report', () => {
  it('writes a self-contained HTML file with the run number, the charts\' script and their data inlined', () => {
    const out = join(dir, 'r1.html');
    const r = cli('report', '1', '--out', out);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toBe('');
    const html = readFileSync(out, 'utf8');
    expect(html).toMatch(/^<!doctype html>/i);
    expect(html).toMatch(/run 1\b/i);
    // the charts' data (the run's summary and its ok windows) and the client script are in the file
    const data = JSON.parse(/<script type="application\/json" id="fw-data">(.*?)<\/script>/s.exec(html)![1]);
    expect(data.summary.run).toBe(1);
    expect(data.columns.t_mid_s.length).toBe(data.summary.windows_ok);
    expect(/<script>([\s\S]*?)<\/script>/.exec(html)![1].length).toBeGreaterThan(30_000);
    // nothing fetched from elsewhere: no src/href/url()/@import to any address (SVG's xmlns is a name, not a fetch)
    expect(html).not.toMatch(/\b(src|href)\s*=\s*["']?(https?:)?\/\//i);
    expect(html).not.toMatch(/url\(\s*["']?(https?:)?\/\//i);
    expect(html).not.toMatch(/@import/i);
    expect(html).not.toMatch(/<script[^>]+src=/i);
    expect(html.replace(/xmlns(:\w+)?="http:\/\/www\.w3\.org\/[^"]*"/g, '')).not.toMatch(/https?:\/\//);
  });

  it('gives κ and G with their total σ, the statistical part and the dominant source, and the corrections', () => {
    const out = join(dir, 'r3.html');
    expect(cli('report', '3', '--out', out).status).toBe(0);
    const html = readFileSync(out, 'utf8');
    expect(html).toMatch(/torsion constant κ<\/th><td>\(7\.\d+ ± 0\.0\d+\)e-9 N·m\/rad — σ: inertia 0\.4 % dominates .* · statistical part ±[\d.e-]+ N·m\/rad</);
    expect(html).toMatch(/shear modulus G<\/th><td>[\d.]+ ± [\d.]+ GPa — σ: diameter 4 % dominates/);
    expect(html).toMatch(/corrections<\/th><td>T₀ for internal damping/);
  });

  it('takes the comparison\'s span as compare does, and bad usage naming the flag', () => {
    const out = join(dir, 'r1-span.html');
    expect(cli('report', '1', '--out', out, '--compare-from-s', '600').status).toBe(0);
    const data = JSON.parse(/<script type="application\/json" id="fw-data">(.*?)<\/script>/s.exec(readFileSync(out, 'utf8'))![1]);
    // run 1 has one configuration: nothing compared, whatever the span, but the file is whole
    expect(data.summary.run).toBe(1);
    const bad = cli('report', '1', '--out', out, '--compare-from-s', '600', '--compare-to-s', '100');
    expect(bad.status).toBe(2);
    expect(bad.stderr).toMatch(/--compare-to-s: must be after --compare-from-s/);
  });

  it('fails with exit 1 and no stack trace when the file cannot be written', () => {
    const r = cli('report', '1', '--out', join(dir, 'no-such-dir', 'r.html'));
    expect(r.status).toBe(1);
    expect(r.stderr).toContain('no-such-dir');
    expect(r.stderr).not.toMatch(/\n\s+at /);
  });
});

describe('exit statuses and the store', () => {
  it('a run that does not exist: exit 1 naming the run, for every command that takes RUN', async () => {
    const cases = [['show', '99'], ['windows', '99'], ['events', '99'], ['export', '99', '--what', 'samples'], ['report', '99', '--out', join(dir, 'x.html')]];
    const rs = await many(cases);
    for (const [i, args] of cases.entries()) {
      const r = rs[i];
      expect(r.status, args.join(' ')).toBe(1);
      expect(r.stderr).toMatch(/run 99/);
      expect(r.stdout).toBe('');
    }
    expect(existsSync(join(dir, 'x.html'))).toBe(false);
  });

  it('RUN that is not a run number, and --json with --csv: exit 2', async () => {
    const cases = [['show', 'abc'], ['windows', '1.5'], ['events', '0'], ['export', '3x', '--what', 'events']];
    const rs = await many(cases);
    for (const [i, args] of cases.entries()) {
      const r = rs[i];
      expect(r.status, args.join(' ')).toBe(2);
      expect(r.stderr).toMatch(/RUN/);
    }
    const both = cli('windows', '1', '--json', '--csv');
    expect(both.status).toBe(2);
    expect(both.stderr).toMatch(/--json.*--csv/);
    expect(both.stdout).toBe('');
  });

  it('a missing store: exit 1 naming the path, and no store is created', async () => {
    const missing = join(dir, 'absent.db');
    const cases = [['runs'], ['show', '1'], ['fibres'], ['events', '1'], ['export', '1', '--what', 'events']];
    const rs = await Promise.all(cases.map((a) => runCliAsync([...a, '--db', missing])));
    for (const [i, args] of cases.entries()) {
      const r = rs[i];
      expect(r.status, args.join(' ')).toBe(1);
      expect(r.stderr).toContain(missing);
    }
    expect(existsSync(missing)).toBe(false);
  });

  it('honours $FIBREWATCH_DB, and --db overrides it', () => {
    const viaEnv = runCli(['runs', '--json'], { env: { FIBREWATCH_DB: db } });
    expect(viaEnv.status).toBe(0);
    expect(JSON.parse(viaEnv.stdout).map((r: { run: number }) => r.run)).toEqual([1, 2, 3]);
    const override = runCli(['runs', '--json', '--db', join(dir, 'absent.db')], { env: { FIBREWATCH_DB: db } });
    expect(override.status).toBe(1);
    const show = runCli(['show', '2', '--json'], { env: { FIBREWATCH_DB: db } });
    expect(JSON.parse(show.stdout).station).toBe('bench-b');
  });

  it('every --json output is one JSON document and nothing else on stdout', async () => {
    const cases = [['runs'], ['show', '1'], ['windows', '1'], ['events', '1'], ['fibres'], ['fibre', W25.name]];
    const rs = await many(cases.map((a) => [...a, '--json']));
    for (const [i, args] of cases.entries()) {
      const r = rs[i];
      expect(r.status, args.join(' ')).toBe(0);
      expect(() => JSON.parse(r.stdout), args.join(' ')).not.toThrow();
      expect(r.stdout.trim().startsWith('[') || r.stdout.trim().startsWith('{')).toBe(true);
    }
  });
});
