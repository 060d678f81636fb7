/**
 * `record --archive`: a live recording from the simulator over a real
 * pseudo-terminal, pushed to a real PostgreSQL server from the recorder's
 * worker thread. The server is stopped for 10 s mid-recording (the behaviour
 * is the same for a minute: bench/sync.ts measures that): the recording goes
 * on and stores every sample, `show` on the station tells the archive falling
 * behind, and once the server is back the archive catches up — after the
 * recording ends it holds the run exactly (test/archive/exact.ts), nothing
 * lost.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import pg from 'pg';
import { parseScenario } from '../../drivers/simulator/scenario.js';
import { startPtyPair, waitFor, type PtyPair } from '../../drivers/pty-pair.js';
import { stationForScenario } from '../helpers/station-for-scenario.js';
import { runCli, startCli } from '../helpers/cli.js';
import { samplesIn } from '../helpers/store.js';
import { startPgCluster, type PgCluster } from '../helpers/pg-cluster.js';
import { expectArchiveHolds } from './exact.js';

const DURATION_S = 20;
// an invented small balance: T ≈ 2 s, read as an angle at 20 Hz
const SCENARIO = {
  name: 'live-small',
  duration_s: DURATION_S,
  sample_rate_Hz: 20,
  inertia_kg_m2: 1e-4,
  kappa_Nm_per_rad: 1e-3,
  q: 800,
  thermal_noise: false,
  angle_noise_rad: 1e-6,
  initial: { amplitude_rad: 1e-2, phase_rad: 0, equilibrium_rad: 0 },
  sensor: { kind: 'angle' },
  output: { format: 'lines', columns: ['t_s', 'angle_rad'] },
};

let cluster: PgCluster;
let dir: string;
let pty: PtyPair | undefined;

beforeAll(async () => {
  cluster = await startPgCluster();
  await cluster.sql('CREATE DATABASE lab');
  dir = mkdtempSync(join(tmpdir(), 'fw-rec-archive-'));
}, 60_000);

afterAll(async () => {
  await pty?.stop();
  cluster?.destroy();
  if (dir) rmSync(dir, { recursive: true, force: true });
});

/** What the archive holds of its only run so far. */
async function archived(url: string): Promise<number> {
  const c = new pg.Client({ connectionString: url });
  try {
    await c.connect();
    return Number((await c.query('SELECT COALESCE(sum(samples), 0) AS n FROM runs')).rows[0].n);
  } catch {
    return 0;
  } finally {
    await c.end().catch(() => {});
  }
}

const show = (db: string, run = 1) => {
  const r = runCli(['show', String(run), '--db', db, '--json']);
  expect(r.status, r.stderr).toBe(0);
  return JSON.parse(r.stdout) as { samples: number; status: string; archive_lag_s: number | null; archive_synced_at: string | null };
};

describe('record --archive', () => {
  it('records through a 10 s outage of the archive, then the archive catches up: nothing lost', async () => {
    const url = cluster.url('lab');
    const scenarioPath = join(dir, 'scenario.json');
    writeFileSync(scenarioPath, JSON.stringify(SCENARIO));
    pty = await startPtyPair(dir);
    const stationPath = join(dir, 'station.json');
    writeFileSync(stationPath, JSON.stringify(stationForScenario(parseScenario(SCENARIO), { name: 'bench-live', device: pty.devicePath })));
    const db = join(dir, 'station.db');

    const rec = startCli(['record', '--station', stationPath, '--db', db, '--archive', url]);
    await rec.waitForStderr('recording run 1');
    expect(rec.stderr()).toMatch(/pushing to the archive postgres:\/\/postgres@127\.0\.0\.1:\d+\/lab in the background/);
    const sim = startCli(['simulate', '--scenario', scenarioPath, '--device', pty.feedPath, '--speed', '1', '--seed', '5']);

    // the archive follows: samples arrive there within seconds
    let n = 0;
    for (const t0 = Date.now(); n <= 40 && Date.now() - t0 < 20_000;) {
      n = await archived(url);
      await new Promise((r) => setTimeout(r, 100));
    }
    expect(n).toBeGreaterThan(40);

    cluster.stopServer('fast');
    const outageStart = Date.now();
    await waitFor(() => /retrying \(the station's store keeps everything\)/.test(rec.stderr()), 'the follower noticing the outage', 15_000, 50);
    await new Promise((r) => setTimeout(r, 10_000 - (Date.now() - outageStart)));
    // the station keeps recording, and says how far behind the archive is
    const during = show(db);
    expect(during.status).toBe('recording');
    expect(during.archive_lag_s).toBeGreaterThan(6);
    // and in show's text as well
    expect(runCli(['show', '1', '--db', db]).stdout).toMatch(/^\s+lab archive\s+synced \S+, \d+\.\d s behind$/m);
    cluster.startServer();
    await rec.waitForStderr(/reachable again after \d+ s/, 30_000);

    expect((await sim.exited).code, sim.stderr()).toBe(0);
    const written = Number(/wrote (\d+) samples/.exec(sim.stderr())?.[1]);
    expect(written).toBe(SCENARIO.sample_rate_Hz * DURATION_S);
    await waitFor(() => samplesIn(db) >= written, 'every sample stored', 20_000, 100);
    rec.child.kill('SIGTERM');
    expect((await rec.exited).code, rec.stderr()).toBe(0);
    expect(rec.stderr()).not.toMatch(/did not take the end/);
    expect(rec.stderr()).not.toContain('cluster-super-secret');

    // nothing lost on the way: the station has every sample, the archive exactly the station's run, closed
    expect(samplesIn(db)).toBe(written);
    const map = await expectArchiveHolds(db, url);
    const onArchive = show(url, map.get(1));
    expect(onArchive).toMatchObject({ samples: written, status: 'complete', archive_lag_s: 0 });
    expect(show(db)).toMatchObject({ samples: written, status: 'complete', archive_lag_s: 0, archive_synced_at: onArchive.archive_synced_at });
    expect(runCli(['show', '1', '--db', db]).stdout).toMatch(/^\s+lab archive\s+synced \S+, up to date$/m);
  }, 120_000);
});
