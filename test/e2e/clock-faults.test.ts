/**
 * `import` of recordings whose device times go wrong, through the built CLI
 * into a real SQLite file: one absurd time, a 2 h step back, every sample
 * twice, a +10 h leap the clock then keeps, a lone +10 h leap. Each must cost
 * only its bad samples: the import ends, windows are fitted, no gap or
 * duration is zero or negative, and the store says what happened
 * (`clock-fault`, `clock-note`, `gap`). The rule: drivers/clock-guard.ts.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runCliAsync } from '../helpers/cli.js';
import { normals } from '../helpers/blocks.js';
import type { EventJson } from './alerts-helpers.js';

const RATE_Hz = 50;
const N = 6000; // 120 s
const T_s = 2;

let dir: string;
let station: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'fw-clock-'));
  station = join(dir, 'station.json');
  writeFileSync(station, JSON.stringify({
    station: 'clock-bench', fibre: { name: 'clock-fibre' },
    input: { format: 'lines', columns: ['t_s', 'angle_rad'] }, sensor: { kind: 'angle' },
    analysis: { window_periods: 4, step_periods: 1, period_guess_s: T_s },
  }));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** A clean 50 Hz swing (index i at time i/50 s), with the times edited by `edit`; one line per entry of the result. */
function recording(name: string, edit: (t: number[], y: number[]) => void): string {
  const z = normals(5);
  const t: number[] = [], y: number[] = [];
  for (let i = 0; i < N; i++) {
    t.push(i / RATE_Hz);
    y.push(1e-3 * Math.cos((2 * Math.PI * i) / RATE_Hz / T_s) + 1e-7 * z());
  }
  edit(t, y);
  const p = join(dir, `${name}.csv`);
  writeFileSync(p, t.map((ti, i) => `${ti},${y[i].toExponential(9)}\n`).join(''));
  return p;
}

async function importAndRead(file: string): Promise<{ summary: { run: number; duration_s: number; samples: number; windows_ok: number; gaps: number }; events: EventJson[] }> {
  const db = join(dir, 'store.db');
  const imp = await runCliAsync(['import', file, '--station', station, '--db', db, '--started-at', '2026-03-02T00:00:00Z', '--json']);
  expect(imp.status, imp.stderr).toBe(0);
  const summary = JSON.parse(imp.stdout);
  const ev = await runCliAsync(['events', String(summary.run), '--db', db, '--json']);
  expect(ev.status, ev.stderr).toBe(0);
  const events = JSON.parse(ev.stdout) as EventJson[];
  // never a gap or a duration of zero or less
  expect(summary.duration_s).toBeGreaterThan(0);
  for (const e of events.filter((x) => x.kind === 'gap')) expect(e.value).toBeGreaterThan(0);
  return { summary, events };
}

const sum = (evs: EventJson[], key: string) => evs.filter((e) => e.kind === 'clock-fault').reduce((s, e) => s + Number(e.data?.[key] ?? 0), 0);

describe('import with bad device times', () => {
  it('one time of 1e308 among 6000 good lines: ends, masks that sample, fits the rest', async () => {
    const { summary, events } = await importAndRead(recording('absurd', (t) => (t[3000] = 1e308)));
    expect(summary.samples).toBe(N);
    expect(summary.duration_s).toBeCloseTo((N - 1) / RATE_Hz, 6);
    expect(summary.windows_ok).toBeGreaterThanOrEqual(50);
    const cf = events.filter((e) => e.kind === 'clock-fault');
    expect(cf).toHaveLength(1);
    expect(cf[0].data).toMatchObject({ count: 1, leap: 1, values: [1e308] });
    expect(cf[0].t_s).toBeCloseTo(2999 / RATE_Hz, 6);
    expect(summary.gaps).toBe(0);
  }, 60_000);

  it('a 2 h step back: nothing masked, the run goes on after the step, a clock-note says by how much', async () => {
    const { summary, events } = await importAndRead(recording('back', (t) => { for (let i = 3000; i < N; i++) t[i] -= 7200; }));
    expect(summary.duration_s).toBeCloseTo((N - 1) / RATE_Hz, 6);
    expect(summary.windows_ok).toBeGreaterThanOrEqual(48);
    const notes = events.filter((e) => e.kind === 'clock-note');
    expect(notes).toHaveLength(1);
    expect(notes[0].value).toBeCloseTo(7200 - 1 / RATE_Hz, 6);
    expect(events.filter((e) => e.kind === 'clock-fault')).toEqual([]);
    expect(summary.gaps).toBe(0);
  }, 60_000);

  it('every sample twice: the copies are masked, no gap events, the windows as without them', async () => {
    const { summary, events } = await importAndRead(recording('twice', (t, y) => {
      const t2 = t.flatMap((v) => [v, v]);
      const y2 = y.flatMap((v) => [v, v]);
      t.splice(0, t.length, ...t2);
      y.splice(0, y.length, ...y2);
    }));
    expect(summary.samples).toBe(2 * N); // stored, the copies masked
    expect(sum(events, 'repeated')).toBe(N);
    expect(summary.gaps).toBe(0);
    expect(summary.windows_ok).toBeGreaterThanOrEqual(50);
  }, 60_000);

  it('a +10 h leap that the clock keeps is a real gap: one gap event, windows on both sides', async () => {
    const { summary, events } = await importAndRead(recording('leap', (t) => { for (let i = 3000; i < N; i++) t[i] += 36_000; }));
    const gaps = events.filter((e) => e.kind === 'gap');
    expect(gaps).toHaveLength(1);
    expect(gaps[0].value).toBeCloseTo(36_000 + 1 / RATE_Hz, 6);
    expect(summary.duration_s).toBeCloseTo((N - 1) / RATE_Hz + 36_000, 6);
    expect(events.filter((e) => e.kind.startsWith('clock-'))).toEqual([]);
    expect(summary.windows_ok).toBeGreaterThanOrEqual(48);
  }, 60_000);

  it('a lone +10 h leap (the clock then goes on as before) is masked, not a gap', async () => {
    const { summary, events } = await importAndRead(recording('lone-leap', (t) => (t[3000] += 36_000)));
    expect(summary.gaps).toBe(0);
    expect(sum(events, 'leap')).toBe(1);
    expect(summary.duration_s).toBeCloseTo((N - 1) / RATE_Hz, 6);
    expect(summary.windows_ok).toBeGreaterThanOrEqual(50);
  }, 60_000);

  it('`fit` of the same file guards the times as `import` does: the absurd time costs one sample', async () => {
    const file = recording('absurd-fit', (t) => (t[3000] = 1e308));
    const r = await runCliAsync(['fit', file, '--station', station, '--json']);
    expect(r.status, r.stderr).toBe(0);
    const fit = JSON.parse(r.stdout) as { status: string; samples: number; period_s: number };
    expect(fit.status).toBe('ok');
    expect(fit.samples).toBe(N - 1);
    expect(fit.period_s).toBeCloseTo(T_s, 4);
  }, 60_000);

  it('`fit` with one angle of 1e308 among 6000: masks it as a spike (as `import` does) and fits the rest', async () => {
    const file = recording('absurd-angle', (_t, y) => (y[3000] = 1e308));
    const r = await runCliAsync(['fit', file, '--station', station, '--json']);
    expect(r.status, r.stderr).toBe(0);
    const fit = JSON.parse(r.stdout) as { status: string; samples_masked: number; period_s: number };
    expect(fit.status).toBe('ok');
    expect(fit.samples_masked).toBe(1);
    expect(fit.period_s).toBeCloseTo(T_s, 4);
  }, 60_000);
});
