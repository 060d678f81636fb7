/**
 * A sync cut off in the middle leaves the archive exact, and the next one
 * finishes the job: `sync` killed with SIGKILL part-way, then run again; and
 * `sync --watch` riding out the PostgreSQL server being stopped and started
 * again part-way. The store is a real one (two days at 20 Hz, two channels,
 * written by the SampleWriter, with windows and events), pushed in small
 * transactions (--batch-mb 0.05) so that each cut lands mid-sync.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import pg from 'pg';
import { openStore } from '../../db/open.js';
import { insertEvents } from '../../db/events-store.js';
import { insertWindows } from '../../db/windows-store.js';
import { WINDOW_FIELDS, type WindowResult } from '../../src/domain/window-result.js';
import { writeRunInto } from '../db/chunk-store-fixture.js';
import { runCli, startCli } from '../helpers/cli.js';
import { startPgCluster, type PgCluster } from '../helpers/pg-cluster.js';
import { archiveCounts, expectArchiveHolds } from './exact.js';

let cluster: PgCluster;
let dir: string;
let store: string;
let totalChunks: number;

beforeAll(async () => {
  cluster = await startPgCluster();
  await cluster.sql('CREATE DATABASE killed');
  await cluster.sql('CREATE DATABASE restarted');
  dir = mkdtempSync(join(tmpdir(), 'fw-resume-'));
  store = join(dir, 'station.db');
  const db = openStore(store);
  const run = writeRunInto(db, 2 * 86400 * 20);
  // windows and events beside the samples, more than one transaction's worth of neither
  const windows = Array.from({ length: 3000 }, (_, i) => {
    const w = Object.fromEntries(WINDOW_FIELDS.map((f) => [f, null])) as unknown as WindowResult;
    return { ...w, index: i, t_start_s: i * 9.3, t_mid_s: i * 9.3 + 18.6, t_end_s: i * 9.3 + 37.2, samples: 744, status: 'ok', period_s: 9.3 + i * 1e-9, q: 2000 };
  });
  insertWindows(db, run, windows);
  insertEvents(db, run, Array.from({ length: 200 }, (_, i) => ({
    t_s: i * 800, t_ms: Date.UTC(2026, 2, 1) + i * 800_000, kind: i % 2 ? 'gap' : 'bad-input', severity: 'warning', message: `event ${i}`,
    value: i, threshold: null, data: { i },
  })));
  totalChunks = (db.prepare('SELECT COUNT(*) AS n FROM sample_chunks').get() as { n: number }).n;
  db.close();
}, 120_000);

afterAll(() => {
  cluster?.destroy();
  if (dir) rmSync(dir, { recursive: true, force: true });
});

/** Chunks the archive holds so far (committed). */
async function chunksIn(url: string): Promise<number> {
  const c = new pg.Client({ connectionString: url });
  await c.connect();
  try {
    return Number((await c.query("SELECT COALESCE((SELECT count(*) FROM sample_chunks), 0) AS n")).rows[0].n);
  } catch {
    return 0; // the tables are not there yet
  } finally {
    await c.end();
  }
}

/** Poll until the archive holds at least `min` chunks (a sync under way). */
async function untilPartway(url: string, min: number): Promise<void> {
  const t0 = Date.now();
  while ((await chunksIn(url)) < min) {
    if (Date.now() - t0 > 30_000) throw new Error(`timed out waiting for ${min} chunks in the archive`);
  }
}

describe('a sync cut off part-way', () => {
  it('killed with SIGKILL, then run again: the archive is exact', async () => {
    expect(totalChunks).toBeGreaterThan(1500);
    const url = cluster.url('killed');
    const sync = startCli(['sync', '--db', store, '--to', url, '--batch-mb', '0.05']);
    await untilPartway(url, Math.round(totalChunks / 10));
    sync.child.kill('SIGKILL');
    expect((await sync.exited).signal).toBe('SIGKILL');
    const held = await chunksIn(url);
    expect(held, 'the kill came mid-sync').toBeLessThan(totalChunks);

    const again = runCli(['sync', '--db', store, '--to', url, '--json']);
    expect(again.status, again.stderr).toBe(0);
    const out = JSON.parse(again.stdout);
    // the second sync sent only what the first had not committed
    expect(out.synced[0].chunks).toBe(totalChunks - held);
    await expectArchiveHolds(store, url);
    const counts = await archiveCounts(url);
    expect(counts).toMatchObject({ runs: 1, sample_chunks: totalChunks, windows: 3000, events: 200 });
    const third = runCli(['sync', '--db', store, '--to', url, '--json']);
    expect(JSON.parse(third.stdout).synced).toEqual([]);
    expect(await archiveCounts(url)).toEqual(counts);
  });

  it('the server stopped and started again: sync --watch waits it out and finishes, exact; a one-shot sync says to run it again', async () => {
    const url = cluster.url('restarted');
    const watch = startCli(['sync', '--db', store, '--to', url, '--watch', '--batch-mb', '0.05']);
    try {
      await untilPartway(url, Math.round(totalChunks / 10));
      cluster.stopServer('fast');
      // while the server is down a one-shot sync fails with one line, and keeps what was pushed
      const down = runCli(['sync', '--db', store, '--to', url]);
      expect(down.status).toBe(1);
      expect(down.stderr).toMatch(/^fibrewatch: archive postgres:\/\/postgres@127\.0\.0\.1:\d+\/restarted: connection refused/m);
      expect(down.stderr).not.toContain('cluster-super-secret');
      cluster.startServer();
      await watch.waitForStderr(/reachable again after \d+ s: caught up 1 run/, 60_000);
      // the cut came while a transaction was under way
      expect(watch.stderr()).toMatch(/shutting down|connection lost/);
    } finally {
      watch.child.kill('SIGTERM');
    }
    expect((await watch.exited).code, watch.stderr()).toBe(0);
    await expectArchiveHolds(store, url);
  });
});
