/**
 * Lab-archive figures on a real PostgreSQL server (a throwaway cluster with
 * fsync on, as a lab's server runs; test/helpers/pg-cluster.ts):
 *
 * - `sync` of a 7-day 20 Hz run (the import bench's recording, imported once
 *   into a station store kept in $TMPDIR/fibrewatch-bench-sync): wall time of
 *   the CLI into an empty archive (goal ≤ 30 s), of a repeated sync (nothing
 *   to push), and the archive's size;
 * - `record --archive` at 20 Hz from the simulator over a pseudo-terminal:
 *   the live lag, the age of the newest sample in the archive, sampled every
 *   0.5 s for 60 s (goal ≤ 5 s), beside the same age in the station's store;
 *   then the server stopped for 60 s: how long after it returns the archive
 *   has caught up (lag back under 5 s), and whether anything was lost.
 *
 * Runnable alone: `npx tsx bench/sync.ts` (after `npm run build`).
 */
import { spawn } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import Database from 'better-sqlite3';
import pg from 'pg';
import { writeRecording } from './recording-file.js';
import { startPtyPair } from '../drivers/pty-pair.js';
import { parseScenario } from '../drivers/simulator/scenario.js';
import { startPgCluster, type PgCluster } from '../test/helpers/pg-cluster.js';
import { stationForScenario } from '../test/helpers/station-for-scenario.js';

const BIN = fileURLToPath(new URL('../bin/fibrewatch.js', import.meta.url));
const IMPORT_DIR = join(tmpdir(), 'fibrewatch-bench-import');
const DIR = join(tmpdir(), 'fibrewatch-bench-sync');
const RATE_Hz = 20;

/** Run the built CLI to completion; wall time in s. */
function cli(args: string[]): Promise<{ wall_s: number; stdout: string; stderr: string }> {
  return new Promise((resolve, reject) => {
    const t0 = performance.now();
    const child = spawn(process.execPath, [BIN, ...args], { stdio: ['ignore', 'pipe', 'pipe'] });
    let out = '', err = '';
    child.stdout.setEncoding('utf8').on('data', (d: string) => (out += d));
    child.stderr.setEncoding('utf8').on('data', (d: string) => (err += d));
    child.once('exit', (code) => {
      const wall_s = (performance.now() - t0) / 1000;
      if (code !== 0) return reject(new Error(`fibrewatch ${args[0]} exited ${code}: ${err.slice(-1000)}`));
      resolve({ wall_s, stdout: out, stderr: err });
    });
  });
}

/** The 7-day station store: the import bench's recording (generated if missing), imported once and kept. */
async function weekStore(): Promise<string> {
  mkdirSync(IMPORT_DIR, { recursive: true });
  mkdirSync(DIR, { recursive: true });
  const file = join(IMPORT_DIR, `angle-7d-${RATE_Hz}hz.csv`);
  if (!existsSync(file + '.complete')) {
    const n = await writeRecording(file, { duration_s: 7 * 86400, rate_Hz: RATE_Hz, period_s: 60 });
    writeFileSync(file + '.complete', String(n));
  }
  const db = join(DIR, 'station-7d.db');
  if (!existsSync(db + '.complete')) {
    for (const s of ['', '-wal', '-shm']) rmSync(db + s, { force: true });
    const st = join(DIR, 'bench-week.json');
    writeFileSync(st, JSON.stringify({
      station: 'bench-week', fibre: { name: 'bench-fibre', material: 'tungsten', diameter_m: 2.5e-5, length_m: 0.8 }, pendulum: { inertia_kg_m2: 3.6e-5 },
      input: { format: 'lines', columns: ['t_s', 'angle_rad'] }, sensor: { kind: 'angle' }, analysis: { window_periods: 4, step_periods: 1 },
    }));
    const r = await cli(['import', file, '--station', st, '--db', db, '--started-at', '2026-03-02T00:00:00Z']);
    process.stdout.write(`imported the 7-day recording into ${db} in ${r.wall_s.toFixed(1)} s (kept for the next run)\n`);
    writeFileSync(db + '.complete', '1');
  }
  return db;
}

async function query<T extends pg.QueryResultRow>(url: string, text: string): Promise<T[]> {
  const c = new pg.Client({ connectionString: url });
  await c.connect();
  try {
    return (await c.query<T>(text)).rows;
  } finally {
    await c.end();
  }
}

async function benchWeekSync(cluster: PgCluster): Promise<Record<string, number>> {
  const store = await weekStore();
  await cluster.sql('CREATE DATABASE week');
  const url = cluster.url('week');
  const s = new Database(store, { readonly: true });
  const samples = (s.prepare('SELECT SUM(samples) AS n FROM runs').get() as { n: number }).n;
  const windows = (s.prepare('SELECT COUNT(*) AS n FROM windows').get() as { n: number }).n;
  s.close();
  const first = await cli(['sync', '--db', store, '--to', url, '--json']);
  const pushed = JSON.parse(first.stdout) as { synced: { chunks: number; bytes: number }[] };
  const again = await cli(['sync', '--db', store, '--to', url, '--json']);
  const [size] = await query<{ chunks: string; total: string }>(url,
    "SELECT pg_total_relation_size('sample_chunks') AS chunks, pg_database_size(current_database()) AS total");
  const fig = {
    sync_7d_wall_s: first.wall_s,
    sync_7d_samples: samples,
    sync_7d_windows: windows,
    sync_7d_MB_pushed: pushed.synced.reduce((n, r) => n + r.bytes, 0) / 1e6,
    sync_7d_MB_per_s: pushed.synced.reduce((n, r) => n + r.bytes, 0) / 1e6 / first.wall_s,
    sync_repeat_wall_s: again.wall_s,
    archive_sample_chunks_MB: Number(size.chunks) / 1e6,
    archive_bytes_per_sample: Number(size.chunks) / samples,
    station_store_MB: statSync(store).size / 1e6,
  };
  process.stdout.write(`sync of a 7-day ${RATE_Hz} Hz run (${(samples / 1e6).toFixed(2)} M samples, ${windows} windows, ${fig.sync_7d_MB_pushed.toFixed(1)} MB of chunks): `
    + `${fig.sync_7d_wall_s.toFixed(2)} s (${fig.sync_7d_MB_per_s.toFixed(0)} MB/s) — ${fig.sync_7d_wall_s <= 30 ? 'meets' : 'misses'} the 30 s goal; `
    + `repeated: ${fig.sync_repeat_wall_s.toFixed(2)} s; archive: ${fig.archive_sample_chunks_MB.toFixed(1)} MB of chunks (${fig.archive_bytes_per_sample.toFixed(2)} bytes/sample), station store ${fig.station_store_MB.toFixed(1)} MB\n`);
  return fig;
}

const pct = (xs: number[], p: number) => {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.floor(p * s.length))];
};
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

async function benchLive(cluster: PgCluster): Promise<Record<string, number>> {
  const LIVE_S = 60, OUTAGE_S = 60, AFTER_S = 40;
  const dir = mkdtempSync(join(tmpdir(), 'fw-bench-live-'));
  const pty = await startPtyPair(dir);
  const scenario = {
    name: 'bench-live', duration_s: LIVE_S + OUTAGE_S + AFTER_S + 10, sample_rate_Hz: RATE_Hz, inertia_kg_m2: 1e-4, kappa_Nm_per_rad: 1e-3, q: 800,
    thermal_noise: false, angle_noise_rad: 1e-6, initial: { amplitude_rad: 1e-2, phase_rad: 0, equilibrium_rad: 0 },
    sensor: { kind: 'angle' }, output: { format: 'lines', columns: ['t_s', 'angle_rad'] },
  };
  const scenarioPath = join(dir, 'scenario.json');
  writeFileSync(scenarioPath, JSON.stringify(scenario));
  const stationPath = join(dir, 'station.json');
  writeFileSync(stationPath, JSON.stringify(stationForScenario(parseScenario(scenario), { name: 'bench-live', device: pty.devicePath })));
  const db = join(dir, 'station.db');
  await cluster.sql('CREATE DATABASE live');
  const url = cluster.url('live');
  const rec = spawn(process.execPath, [BIN, 'record', '--station', stationPath, '--db', db, '--archive', url], { stdio: ['ignore', 'ignore', 'pipe'] });
  let recErr = '';
  rec.stderr.setEncoding('utf8').on('data', (d: string) => (recErr += d));
  try {
    while (!recErr.includes('recording run')) await sleep(50);
    const sim = spawn(process.execPath, [BIN, 'simulate', '--scenario', scenarioPath, '--device', pty.feedPath, '--speed', '1', '--seed', '9'], { stdio: 'ignore' });
    const simDone = new Promise<void>((r) => sim.once('exit', () => r()));
    const client = new pg.Client({ connectionString: url });
    client.on('error', () => {});
    let connected = false;
    /** Age of the newest sample, s: in the archive (null while it cannot be asked) and in the station's store. */
    const ages = async (): Promise<{ archive: number | null; station: number | null }> => {
      const now = Date.now();
      let station: number | null = null;
      try {
        const s = new Database(db, { readonly: true, fileMustExist: true });
        const r = s.prepare('SELECT r.started_at_ms AS t0, (SELECT MAX(t1_s) FROM sample_chunks) AS t1 FROM runs r ORDER BY id DESC LIMIT 1').get() as { t0: number; t1: number | null } | undefined;
        s.close();
        if (r?.t1 != null) station = (now - (r.t0 + 1000 * r.t1)) / 1000;
      } catch {
        // the store is being created
      }
      let archive: number | null = null;
      try {
        if (!connected) {
          await client.connect();
          connected = true;
        }
        const r = (await client.query('SELECT started_at_ms AS t0, synced_to_s AS t1 FROM runs ORDER BY id DESC LIMIT 1')).rows[0];
        if (r?.t1 != null) archive = (now - (Number(r.t0) + 1000 * r.t1)) / 1000;
      } catch {
        // the archive is not there yet, or down
      }
      return { archive, station };
    };
    // warm-up: the first window, the first sync
    const t0 = Date.now();
    while ((await ages()).archive === null && Date.now() - t0 < 30_000) await sleep(200);
    const live: number[] = [], stationAges: number[] = [];
    const tLive = Date.now();
    while (Date.now() - tLive < LIVE_S * 1000) {
      const a = await ages();
      if (a.archive !== null) live.push(a.archive);
      if (a.station !== null) stationAges.push(a.station);
      await sleep(500);
    }
    await client.end().catch(() => {});
    cluster.stopServer('fast');
    await sleep(OUTAGE_S * 1000);
    // what the station tells about it (show --json, the dashboard's field)
    const behind = JSON.parse((await cli(['show', '1', '--db', db, '--json'])).stdout) as { archive_lag_s: number | null };
    cluster.startServer();
    const back = Date.now();
    const client2 = new pg.Client({ connectionString: url });
    client2.on('error', () => {});
    await client2.connect();
    let caughtUp_s = NaN;
    while (Date.now() - back < 60_000) {
      const r = (await client2.query('SELECT started_at_ms AS t0, synced_to_s AS t1 FROM runs ORDER BY id DESC LIMIT 1')).rows[0];
      const age = (Date.now() - (Number(r.t0) + 1000 * r.t1)) / 1000;
      if (age < 5) {
        caughtUp_s = (Date.now() - back) / 1000;
        break;
      }
      await sleep(100);
    }
    await client2.end();
    await simDone;
    await sleep(2000);
    rec.kill('SIGTERM');
    await new Promise<void>((r) => rec.once('exit', () => r()));
    const s = new Database(db, { readonly: true });
    const stored = (s.prepare('SELECT SUM(samples) AS n FROM runs').get() as { n: number }).n;
    const storedChunks = (s.prepare('SELECT COUNT(*) AS n, SUM(count) AS k FROM sample_chunks').get() as { n: number; k: number });
    s.close();
    const [inArchive] = await query<{ n: string; chunks: string; k: string; status: string }>(url,
      'SELECT (SELECT sum(samples) FROM runs) AS n, (SELECT count(*) FROM sample_chunks) AS chunks, (SELECT sum(count) FROM sample_chunks) AS k, (SELECT status FROM runs LIMIT 1) AS status');
    const lost = stored - Number(inArchive.n);
    const fig = {
      live_lag_median_s: pct(live, 0.5),
      live_lag_p95_s: pct(live, 0.95),
      live_lag_max_s: Math.max(...live),
      station_age_median_s: pct(stationAges, 0.5),
      station_age_max_s: Math.max(...stationAges),
      outage_s: OUTAGE_S,
      outage_show_archive_lag_s: behind.archive_lag_s ?? NaN,
      catch_up_after_outage_s: caughtUp_s,
      outage_samples_stored: stored,
      outage_samples_missing_in_archive: lost,
      outage_chunks_differ: storedChunks.n - Number(inArchive.chunks),
    };
    process.stdout.write(`live lag of record --archive at ${RATE_Hz} Hz over ${LIVE_S} s (${live.length} looks): median ${fig.live_lag_median_s.toFixed(2)} s, p95 ${fig.live_lag_p95_s.toFixed(2)} s, `
      + `max ${fig.live_lag_max_s.toFixed(2)} s — ${fig.live_lag_max_s <= 5 ? 'meets' : 'misses'} the 5 s goal (the station's own store: median ${fig.station_age_median_s.toFixed(2)} s, max ${fig.station_age_max_s.toFixed(2)} s)\n`);
    process.stdout.write(`server stopped for ${OUTAGE_S} s during record --archive: show's archive_lag_s at its end ${fig.outage_show_archive_lag_s.toFixed(1)} s; caught up ${caughtUp_s.toFixed(1)} s after it came back; `
      + `${stored} samples stored, ${lost} missing in the archive, run ${inArchive.status} there (recorder log: ${recErr.split('\n').filter((l) => /archive/.test(l)).slice(1).join(' | ')})\n`);
    return fig;
  } finally {
    if (rec.exitCode === null) rec.kill('SIGKILL');
    await pty.stop();
    rmSync(dir, { recursive: true, force: true });
  }
}

/** All lab-archive sync figures. */
export async function benchSync(): Promise<Record<string, number>> {
  const cluster = await startPgCluster({ fsync: true });
  try {
    return { ...(await benchWeekSync(cluster)), ...(await benchLive(cluster)) };
  } finally {
    cluster.destroy();
  }
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  benchSync().then((f) => console.log(f));
}
