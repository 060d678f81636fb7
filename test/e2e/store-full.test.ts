/**
 * A full disk under `import` and `record`: the store lives on a real, small
 * tmpfs (mounted for the test; needs root, as .ci/run has), nearly filled by
 * a filler file. The command must exit 1 with one line, close the run as
 * `interrupted` (with a `store-full` event when it still fits) and leave the
 * store intact. Without permission to mount (not root, or a container
 * without the mount capability), the tests are skipped with a message.
 */
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { mkdtempSync, readdirSync, rmSync, statfsSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { spawnSync } from 'node:child_process';
import Database from 'better-sqlite3';
import { startPtyPair, type PtyPair } from '../../drivers/pty-pair.js';
import { writerProcess } from '../helpers/pty.js';
import { runCli, runCliAsync, startCli } from '../helpers/cli.js';

let work: string;
let mnt: string;
let mounted = false;
let why = '';

beforeAll(() => {
  work = mkdtempSync(join(tmpdir(), 'fw-full-'));
  mnt = join(work, 'small');
  spawnSync('mkdir', [mnt]);
  const r = spawnSync('mount', ['-t', 'tmpfs', '-o', 'size=4m', 'tmpfs', mnt], { encoding: 'utf8' });
  mounted = r.status === 0;
  why = (r.stderr || r.error?.message || `exit ${r.status}`).trim();
  if (!mounted) console.warn(`store-full tests skipped: cannot mount a small tmpfs here (${why}); they need root`);
});
afterAll(() => {
  if (mounted) spawnSync('umount', ['-l', mnt]);
  rmSync(work, { recursive: true, force: true });
});

/** Fill the small filesystem but for `free_bytes`, with a fresh store on it. */
function nearlyFull(free_bytes: number): string {
  for (const f of ['store.db', 'store.db-wal', 'store.db-shm', 'filler']) rmSync(join(mnt, f), { force: true });
  const db = join(mnt, 'store.db');
  expect(runCli(['runs', '--db', db]).status).toBe(1); // no store yet: a reading command refuses
  // create the store (and its WAL) before filling the rest
  const st = join(work, 'st-init.json');
  writeFileSync(st, JSON.stringify({ station: 'full-bench', fibre: { name: 'full-fibre' }, input: { format: 'lines', columns: ['t_s', 'angle_rad'] } }));
  const tiny = join(work, 'tiny.csv');
  writeFileSync(tiny, '0,0\n1,0\n2,0\n3,0\n4,0\n');
  expect(runCli(['import', tiny, '--station', st, '--db', db, '--started-at', '2026-03-02T00:00:00Z']).status).toBe(0);
  const s = statfsSync(mnt);
  const avail = s.bavail * s.bsize;
  writeFileSync(join(mnt, 'filler'), Buffer.alloc(Math.max(0, avail - free_bytes)));
  return db;
}

function check(db: string): { status: string; samples: number; events: string[] }[] {
  const d = new Database(db, { readonly: true });
  try {
    expect(d.pragma('integrity_check', { simple: true })).toBe('ok');
    const runs = d.prepare('SELECT id, status, samples FROM runs ORDER BY id').all() as { id: number; status: string; samples: number }[];
    return runs.map((r) => ({
      status: r.status, samples: r.samples,
      events: (d.prepare('SELECT kind FROM events WHERE run_id = ? ORDER BY t_s').all(r.id) as { kind: string }[]).map((e) => e.kind),
    }));
  } finally {
    d.close();
  }
}

describe('a full disk', () => {
  beforeEach((ctx) => {
    if (!mounted) ctx.skip();
  });

  it('during import: exit 1 with one line, the run interrupted, the store intact', async () => {
    const db = nearlyFull(300_000);
    const file = join(work, 'big.csv');
    const parts: string[] = [];
    // values that do not pack small (about 4 bytes a sample): 400 000 of them cannot fit in 300 kB
    for (let i = 0; i < 400_000; i++) parts.push(`${i * 0.01},${((i * 7919) % 10007) / 10007}\n`);
    writeFileSync(file, parts.join(''));
    const st = join(work, 'st.json');
    writeFileSync(st, JSON.stringify({ station: 'full-bench', fibre: { name: 'full-fibre' }, input: { format: 'lines', columns: ['t_s', 'angle_rad'] }, analysis: { period_guess_s: 2 } }));
    const r = await runCliAsync(['import', file, '--station', st, '--db', db, '--started-at', '2026-03-02T00:00:00Z']);
    expect(r.status, r.stderr).toBe(1);
    const lines = r.stderr.trim().split('\n');
    expect(lines.filter((l) => l.startsWith('fibrewatch:')), r.stderr).toEqual([expect.stringMatching(/^fibrewatch: the store is full: import of .* stopped, run 2 closed as interrupted with \d+ samples/)]);
    expect(r.stderr).not.toMatch(/\n\s+at /); // no stack trace
    console.log(lines.find((l) => l.startsWith('fibrewatch:')));
    rmSync(join(mnt, 'filler')); // room again, to read and check
    const runs = check(db);
    expect(runs.map((x) => x.status)).toEqual(['complete', 'interrupted']);
    expect(runs[1].samples).toBeGreaterThan(0);
    expect(runs[1].samples).toBeLessThan(400_000);
    // the reserve held beside the store (db/space-reserve.ts) leaves room for the run's end and its event, and is gone after
    expect(r.stderr).not.toMatch(/no room for its event/);
    expect(runs[1].events).toContain('store-full');
    expect(readdirSync(mnt).filter((f) => f.includes('-reserve'))).toEqual([]);
  }, 90_000);

  it('during record: exit 1 with one line, the run interrupted, the store intact', async () => {
    const db = nearlyFull(300_000);
    let pty: PtyPair | undefined;
    try {
      pty = await startPtyPair(work);
      const st = join(work, 'st-rec.json');
      writeFileSync(st, JSON.stringify({ station: 'full-bench', fibre: { name: 'full-fibre' }, input: { device: pty.devicePath, format: 'lines', columns: ['t_s', 'angle_rad'] } }));
      const rec = startCli(['record', '--station', st, '--db', db]);
      await rec.waitForStderr('recording run');
      const w = writerProcess(pty.feedPath, { rate_per_s: 0 });
      const ex = await Promise.race([rec.exited, new Promise<'timeout'>((res) => setTimeout(() => res('timeout'), 60_000))]);
      await w.stop();
      expect(ex, rec.stderr()).toEqual({ code: 1, signal: null });
      const lines = rec.stderr().trim().split('\n').filter((l) => l.startsWith('fibrewatch:'));
      expect(lines, rec.stderr()).toEqual([expect.stringMatching(/^fibrewatch: the store is full: run 2 closed as interrupted with \d+ samples/)]);
      expect(rec.stderr()).not.toMatch(/\n\s+at /);
      console.log(lines[0]);
      rmSync(join(mnt, 'filler'));
      const runs = check(db);
      expect(runs.map((x) => x.status)).toEqual(['complete', 'interrupted']);
      expect(runs[1].samples).toBeGreaterThan(0);
      expect(rec.stderr()).not.toMatch(/no room for its event/);
      expect(runs[1].events).toContain('store-full');
      expect(readdirSync(mnt).filter((f) => f.includes('-reserve'))).toEqual([]);
    } finally {
      await pty?.stop();
    }
  }, 90_000);
});
