/**
 * How a run begins and ends, with the built CLI in its own process, real
 * socat pseudo-terminals and a real SQLite file: a torn last line on a live
 * line, SIGHUP, a signal during `import`, and a second `record` of a station
 * whose recorder is still alive (refused) or crashed (its run marked
 * interrupted).
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { hostname, tmpdir } from 'node:os';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import { startPtyPair, waitFor, type PtyPair } from '../../drivers/pty-pair.js';
import { writerProcess } from '../helpers/pty.js';
import { runCliAsync, startCli } from '../helpers/cli.js';
import { samplesIn } from '../helpers/store.js';
import { readSamples } from '../../db/sample-reader.js';
import { listEvents } from '../../db/events-store.js';
import { openStore } from '../../db/open.js';
import { createRun } from '../../db/runs.js';

let dir: string;
let pty: PtyPair | undefined;
beforeEach(() => {
  dir = mkdtempSync(join(tmpdir(), 'fw-lifecycle-'));
});
afterEach(async () => {
  await pty?.stop();
  pty = undefined;
  rmSync(dir, { recursive: true, force: true });
});

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

function station(device: string, extra: Record<string, unknown> = {}): string {
  const p = join(dir, 'station.json');
  writeFileSync(p, JSON.stringify({
    station: 'pty-life', fibre: { name: 'life-fibre' },
    input: { device, format: 'lines', columns: ['t_s', 'angle_rad'] },
    sensor: { kind: 'angle' }, ...extra,
  }));
  return p;
}

function runs(db: string): { id: number; status: string; samples: number; recorder_pid: number | null; recorder_host: string | null; heartbeat_ms: number | null }[] {
  const d = new Database(db, { readonly: true });
  try {
    return d.prepare('SELECT id, status, samples, recorder_pid, recorder_host, heartbeat_ms FROM runs ORDER BY id').all() as never;
  } finally {
    d.close();
  }
}

describe('the end of a live line', () => {
  it('a torn last line before silence is dropped as bad input, never stored, and no-data is not cleared by it', async () => {
    pty = await startPtyPair(dir);
    const db = join(dir, 'store.db');
    const rec = startCli(['record', '--station', station(pty.devicePath, { alerts: { no_data_s: 1 } }), '--db', db]);
    await rec.waitForStderr('recording run');
    let lines = '\n'; // the first line after opening is dropped as torn
    for (let i = 0; i < 200; i++) lines += `${i * 0.02},0.001\n`;
    // then the device stops in the middle of a line: `12.3456,1.2` and silence
    expect((await writerProcess(pty.feedPath, { bytes: Buffer.from(lines + '12.3456,1.2') }).done).code).toBe(0);
    await waitFor(() => samplesIn(db) >= 200, '200 samples', 20_000, 50);
    await rec.waitForStderr(/no-data/, 20_000);
    rec.child.kill('SIGINT');
    expect((await rec.exited).code, rec.stderr()).toBe(0);

    const d = new Database(db, { readonly: true });
    const run = d.prepare('SELECT id, samples FROM runs').get() as { id: number; samples: number };
    expect(run.samples).toBe(200);
    const s = readSamples(d, run.id, 'angle');
    expect(Math.max(...s.v)).toBe(0.001); // no sample of 1.2 rad
    const evs = listEvents(d, run.id);
    d.close();
    const bad = evs.filter((e) => e.kind === 'bad-input');
    expect(bad).toHaveLength(1);
    expect(bad[0].message).toMatch(/torn/);
    expect(bad[0].data?.snippet).toBe('12.3456,1.2');
    const noData = evs.filter((e) => e.kind === 'no-data').map((e) => e.state);
    expect(noData).toEqual(['raised']); // never "data back" from a line that never ended
  });
});

describe('signals', () => {
  it('SIGHUP ends record like SIGTERM: exit 0, run complete', async () => {
    pty = await startPtyPair(dir);
    const db = join(dir, 'store.db');
    const rec = startCli(['record', '--station', station(pty.devicePath), '--db', db]);
    await rec.waitForStderr('recording run');
    // (the first time is trusted once three more go on from it: drivers/clock-guard.ts)
    expect((await writerProcess(pty.feedPath, { bytes: Buffer.from('\n0,0\n0.1,0\n0.2,0\n0.3,0\n') }).done).code).toBe(0);
    await waitFor(() => samplesIn(db) >= 4, 'samples', 20_000, 50);
    rec.child.kill('SIGHUP');
    const ex = await rec.exited;
    expect(ex, rec.stderr()).toEqual({ code: 0, signal: null });
    expect(rec.stderr()).toMatch(/closed \(SIGHUP\)/);
    expect(runs(db).map((r) => r.status)).toEqual(['complete']);
  });

  for (const sig of ['SIGINT', 'SIGTERM'] as const) {
    it(`${sig} during import closes the run as interrupted with what was stored, one line, exit 1`, async () => {
      // long enough that the import is still reading when the signal comes
      const file = join(dir, 'long.csv');
      const parts: string[] = [];
      for (let i = 0; i < 1_500_000; i++) parts.push(`${i * 0.01},${(1e-3 * Math.cos(i * 0.0314)).toFixed(8)}\n`);
      writeFileSync(file, parts.join(''));
      const db = join(dir, 'store.db');
      const imp = startCli(['import', file, '--station', station('/dev/null', { analysis: { period_guess_s: 2 } }), '--db', db, '--started-at', '2026-03-02T00:00:00Z']);
      await waitFor(() => { try { return samplesIn(db) > 0; } catch { return false; } }, 'the first commit', 30_000, 20);
      imp.child.kill(sig);
      const ex = await imp.exited;
      expect(ex.code, imp.stderr()).toBe(1);
      const lines = imp.stderr().trim().split('\n').filter((l) => l.startsWith('fibrewatch:'));
      expect(lines).toHaveLength(1);
      expect(lines[0]).toMatch(new RegExp(`interrupted by ${sig}: run 1 closed as interrupted with \\d+ samples`));
      const [r] = runs(db);
      expect(r.status).toBe('interrupted');
      expect(r.samples).toBeGreaterThan(0);
      expect(r.samples).toBeLessThan(1_500_000);
      expect(Number(/with (\d+) samples/.exec(lines[0])![1])).toBe(r.samples);
    }, 90_000);
  }
});

describe('a second record of the same station', () => {
  it('is refused while the first is alive, naming its run and pid; the first records on', async () => {
    pty = await startPtyPair(dir);
    const db = join(dir, 'store.db');
    const st = station(pty.devicePath);
    const first = startCli(['record', '--station', st, '--db', db]);
    await first.waitForStderr('recording run');
    const second = await runCliAsync(['record', '--station', st, '--db', db]);
    expect(second.status).toBe(1);
    const line = second.stderr.trim();
    expect(line.split('\n')).toHaveLength(1);
    expect(line).toContain(`station pty-life is already recording: run 1, pid ${first.child.pid} on ${hostname()}`);
    expect(runs(db).map((r) => r.status)).toEqual(['recording']);
    // the first is untouched and still records
    expect((await writerProcess(pty.feedPath, { bytes: Buffer.from('\n0,0\n0.1,0\n0.2,0\n0.3,0\n') }).done).code).toBe(0);
    await waitFor(() => samplesIn(db) >= 4, 'samples of the first', 20_000, 50);
    first.child.kill('SIGINT');
    expect((await first.exited).code).toBe(0);
    const rs = runs(db);
    expect(rs.map((r) => r.status)).toEqual(['complete']);
    expect(rs[0].recorder_pid).toBe(first.child.pid);
    expect(rs[0].recorder_host).toBe(hostname());
  });

  it('marks a run interrupted when its recorder is gone, or its heartbeat stale even if the pid lives (reused)', async () => {
    pty = await startPtyPair(dir);
    const db = join(dir, 'store.db');
    const st = station(pty.devicePath);
    const s = openStore(db);
    const now = Date.now();
    // run 1: a pid that is certainly dead, fresh heartbeat; run 2: a live pid (this test) with a stale heartbeat
    const dead = createRun(s, { station: 'pty-life', fibre: { name: 'life-fibre' }, startedAt_ms: now - 60_000, source: 'device', recorder: { pid: 2 ** 22 + 1, host: hostname() } });
    const stale = createRun(s, { station: 'pty-life', fibre: { name: 'life-fibre' }, startedAt_ms: now - 60_000, source: 'device', recorder: { pid: process.pid, host: hostname() } });
    s.prepare('UPDATE runs SET heartbeat_ms = ? WHERE id = ?').run(now - 60_000, stale);
    s.close();
    const rec = startCli(['record', '--station', st, '--db', db]);
    await rec.waitForStderr('recording run');
    expect(rec.stderr()).toContain(`runs ${dead}, ${stale} had been left recording (crash or power loss): marked interrupted`);
    rec.child.kill('SIGTERM');
    expect((await rec.exited).code).toBe(0);
    expect(runs(db).map((r) => r.status)).toEqual(['interrupted', 'interrupted', 'complete']);
  });

  it('keeps a heartbeat while the device sends nothing', async () => {
    pty = await startPtyPair(dir);
    const db = join(dir, 'store.db');
    const rec = startCli(['record', '--station', station(pty.devicePath), '--db', db]);
    await rec.waitForStderr('recording run');
    const h0 = runs(db)[0].heartbeat_ms!;
    await sleep(2500);
    const h1 = runs(db)[0].heartbeat_ms!;
    expect(h1 - h0).toBeGreaterThanOrEqual(1000);
    expect(Date.now() - h1).toBeLessThan(2000);
    rec.child.kill('SIGINT');
    expect((await rec.exited).code).toBe(0);
  });
});
