/**
 * `record` for real: socat pseudo-terminal pairs, the real serialport stack,
 * the built CLI in its own process, a real SQLite file. Covers the lossless
 * path, an unplug/replug, a crash (kill -9) and bad configuration.
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { spawn } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import Database from 'better-sqlite3';
import { startPtyPair, waitFor, type PtyPair } from '../../drivers/pty-pair.js';
import { writerProcess, writerLine } from '../helpers/pty.js';
import { runCli, startCli } from '../helpers/cli.js';
import { readSamples } from '../../db/sample-reader.js';
import { listEvents } from '../../db/events-store.js';
import { samplesIn } from '../helpers/store.js';

let dir: string;
let pty: PtyPair | undefined;

beforeEach(() => {
  dir = mkdtempSync(join(tmpdir(), 'fw-record-'));
});
afterEach(async () => {
  await pty?.stop();
  pty = undefined;
  rmSync(dir, { recursive: true, force: true });
});

function station(device: string, extra: Record<string, unknown> = {}): string {
  const p = join(dir, 'station.json');
  writeFileSync(p, JSON.stringify({
    station: 'pty-bench', fibre: { name: 'test-fibre' },
    input: { device, format: 'lines', columns: ['t_s', 'angle_rad'], reconnect: { min_delay_s: 0.1, max_delay_s: 0.5 } },
    sensor: { kind: 'angle' }, ...extra,
  }));
  return p;
}

describe('record over a pseudo-terminal', () => {
  it('stores every sample written, values equal to float32 precision or better', async () => {
    pty = await startPtyPair(dir);
    const db = join(dir, 'store.db');
    const rec = startCli(['record', '--station', station(pty.devicePath), '--db', db]);
    await rec.waitForStderr('recording run');
    // record drops the first line after opening the port (usually torn): give it an empty one
    expect((await writerProcess(pty.feedPath, { bytes: Buffer.from('\n') }).done).code).toBe(0);
    const N = 30_000;
    const w = writerProcess(pty.feedPath, { count: N });
    const res = await w.done;
    expect(res.code).toBe(0);
    await waitFor(() => samplesIn(db) >= N, 'all samples committed', 20_000, 100);
    rec.child.kill('SIGINT');
    expect((await rec.exited).code).toBe(0);

    const d = new Database(db, { readonly: true });
    const run = d.prepare('SELECT id, status, samples FROM runs').get() as { id: number; status: string; samples: number };
    expect(run.status).toBe('complete');
    expect(run.samples).toBe(N);
    const s = readSamples(d, run.id, 'angle');
    expect(s.t.length).toBe(N);
    let worst = 0;
    for (let i = 0; i < N; i++) {
      const [ti, vi] = writerLine(i).trim().split(',').map(Number);
      expect(s.t[i]).toBe(ti); // t_s = i, first sample at 0: times exact
      worst = Math.max(worst, Math.abs(s.v[i] - vi));
    }
    // values lie in [0, 1): float32 precision is 2^-24 ≈ 6e-8 of the range
    expect(worst).toBeLessThan(6e-8);
    expect(d.pragma('integrity_check', { simple: true })).toBe('ok');
    d.close();
  });

  it('survives an unplug: the run continues, reconnect and gap are stored, nothing after the return is lost', async () => {
    pty = await startPtyPair(dir);
    const db = join(dir, 'store.db');
    const rec = startCli(['record', '--station', station(pty.devicePath), '--db', db]);
    await rec.waitForStderr('recording run');
    expect((await writerProcess(pty.feedPath, { bytes: Buffer.from('\n') }).done).code).toBe(0);
    const w = writerProcess(pty.feedPath, { rate_per_s: 1000, reopen: true } as never);
    await w.ready;
    await waitFor(() => samplesIn(db) > 1500, 'data before the unplug', 20_000, 50);
    const downAt = Date.now();
    await pty.stop();
    await new Promise((r) => setTimeout(r, 3000));
    pty = await startPtyPair(dir);
    const upAt = Date.now();
    await rec.waitForStderr('back after', 20_000);
    const before = samplesIn(db);
    await waitFor(() => samplesIn(db) > before + 2000, 'data after the return', 20_000, 50);
    const fin = await w.finish();
    await new Promise((r) => setTimeout(r, 1500)); // let the last lines cross and commit
    rec.child.kill('SIGTERM');
    expect((await rec.exited).code).toBe(0);

    const d = new Database(db, { readonly: true });
    const run = d.prepare('SELECT id, status FROM runs').get() as { id: number; status: string };
    expect(run.status).toBe('complete');
    const evs = listEvents(d, run.id);
    const reconnect = evs.filter((e) => e.kind === 'reconnect');
    // the transport's gap (the device was away); lines carry t_s = index, so their own time jump is in index units
    const gaps = evs.filter((e) => e.kind === 'gap' && e.data?.path !== undefined);
    expect(reconnect.length).toBe(1);
    expect(gaps.length).toBeGreaterThanOrEqual(1);
    const outage = (upAt - downAt) / 1000;
    const gapDur = Math.max(...gaps.map((g) => Number(g.data?.duration_s)));
    expect(Math.abs(gapDur - outage)).toBeLessThan(1.0);
    // stored indices: one contiguous stretch before the unplug, one after, to the writer's last line
    const s = readSamples(d, run.id, 'angle');
    const t0 = writerLine(0).split(',')[0];
    expect(Number(t0)).toBe(0);
    let jumps = 0;
    for (let i = 1; i < s.t.length; i++) {
      const step = s.t[i] - s.t[i - 1];
      expect(step).toBeGreaterThan(0);
      if (step !== 1) jumps++;
    }
    expect(jumps).toBe(1);
    expect(s.t[s.t.length - 1]).toBe(fin.written - 1);
    d.close();
  });

  it('after kill -9 the store is sound, holds every sample older than 1 s, and the next start marks the run interrupted', async () => {
    pty = await startPtyPair(dir);
    const db = join(dir, 'store.db');
    const st = station(pty.devicePath);
    const rec = startCli(['record', '--station', st, '--db', db]);
    await rec.waitForStderr('recording run');
    const writerScript = fileURLToPath(new URL('./wallclock-writer.mjs', import.meta.url));
    const w = spawn(process.execPath, [writerScript, pty.feedPath, '1000'], { stdio: ['ignore', 'pipe', 'ignore'] });
    const firstLineT = Date.now() / 1000;
    await waitFor(() => samplesIn(db) > 3000, 'samples stored', 20_000, 50);
    await new Promise((r) => setTimeout(r, 700));
    const killAt = Date.now() / 1000;
    rec.child.kill('SIGKILL');
    await rec.exited;
    w.kill('SIGTERM');

    const d = new Database(db, { readonly: true });
    expect(d.pragma('integrity_check', { simple: true })).toBe('ok');
    const run = d.prepare('SELECT id, status FROM runs').get() as { id: number; status: string };
    expect(run.status).toBe('recording');
    const s = readSamples(d, run.id, 'angle');
    d.close();
    // the run's time axis starts at the first line; the writer wrote one line per ms from firstLineT
    // (to within the start-up jitter), so everything up to killAt − 1 s must be there
    const expectedAtLeast = Math.floor((killAt - 1 - firstLineT) * 1000) - 50;
    expect(s.t.length).toBeGreaterThanOrEqual(expectedAtLeast);
    for (let i = 1; i < s.t.length; i++) expect(s.t[i] - s.t[i - 1]).toBeCloseTo(0.001, 3);

    // the next start marks the crashed run interrupted and starts a new one
    const rec2 = startCli(['record', '--station', st, '--db', db]);
    await rec2.waitForStderr('recording run');
    expect(rec2.stderr()).toMatch(/run 1 had been left recording.*interrupted/);
    rec2.child.kill('SIGINT');
    expect((await rec2.exited).code).toBe(0);
    const d2 = new Database(db, { readonly: true });
    const runs = d2.prepare('SELECT id, status FROM runs ORDER BY id').all() as { id: number; status: string }[];
    d2.close();
    expect(runs[0].status).toBe('interrupted');
    expect(runs[1].status).toBe('complete');
  });

  it('--wait-for-device keeps retrying until the device appears, then records', async () => {
    const db = join(dir, 'store.db');
    const devicePath = join(dir, 'dev');
    const rec = startCli(['record', '--station', station(devicePath), '--db', db, '--wait-for-device']);
    await new Promise((r) => setTimeout(r, 1500));
    expect(rec.child.exitCode).toBeNull(); // still waiting, not failed
    pty = await startPtyPair(dir);
    await rec.waitForStderr('appeared and is open');
    expect((await writerProcess(pty.feedPath, { bytes: Buffer.from('\n') }).done).code).toBe(0);
    expect((await writerProcess(pty.feedPath, { count: 2000 }).done).code).toBe(0);
    await waitFor(() => samplesIn(db) >= 2000, 'samples after the device appeared', 20_000, 100);
    rec.child.kill('SIGINT');
    expect((await rec.exited).code).toBe(0);
  });

  it('refuses a wrong station file with exit 2 naming the field', () => {
    const p = join(dir, 'bad.json');
    writeFileSync(p, JSON.stringify({ station: 'x', fibre: { name: 'f', diameter_m: -1 }, input: { device: '/dev/null' } }));
    const r = runCli(['record', '--station', p, '--db', join(dir, 's.db')]);
    expect(r.status).toBe(2);
    expect(r.stderr).toContain('fibre.diameter_m: must be > 0');
  });

  it('a missing device path is a clear error with exit 1', () => {
    const missing = join(dir, 'no-such-tty');
    const r = runCli(['record', '--station', station(missing), '--db', join(dir, 's.db')]);
    expect(r.status).toBe(1);
    expect(r.stderr).toContain(missing);
  });
});
