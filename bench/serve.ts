/**
 * `fibrewatch serve` figures, on the built CLI in child processes:
 *  - the API answers for a 7-day run at 20 Hz (the import bench's recording:
 *    12 M samples, 10 077 windows), each the first time (cold) and again
 *    (warm, median of 5), as a browser gets them over HTTP; goals: every
 *    answer ≤ 200 ms, the whole week's samples at 2,000 points ≤ 100 ms;
 *  - the one-file report of that week: size (goal < 3 MB) and time;
 *  - `record`'s sample→window latency on a pseudo-terminal, without and with
 *    20 clients on the live stream (goal: median ≤ 1 s either way), and how
 *    long the stream takes to deliver a stored window.
 * The 7-day store is bench/noise.ts's (kept in $TMPDIR/fibrewatch-bench-import;
 * imported here when absent). Runnable alone: `npx tsx bench/serve.ts` after
 * `npm run build`.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import Database from 'better-sqlite3';
import { startPtyPair, waitFor } from '../drivers/pty-pair.js';
import { writerProcess } from '../test/helpers/pty.js';
import { median } from '../src/analysis/median.js';
import { writeRecording } from './recording-file.js';

const BIN = fileURLToPath(new URL('../bin/fibrewatch.js', import.meta.url));
const DIR = join(tmpdir(), 'fibrewatch-bench-import');

/** The 7-day 20 Hz store: bench/noise.ts's when it is there, else imported the same way (kept). */
async function weekStore(): Promise<string> {
  const noiseDb = join(DIR, 'noise-7d.db');
  if (existsSync(noiseDb + '.complete') && existsSync(noiseDb)) return noiseDb;
  mkdirSync(DIR, { recursive: true });
  const file = join(DIR, 'angle-7d-20hz.csv');
  if (!existsSync(file + '.complete')) writeFileSync(file + '.complete', String(await writeRecording(file, { duration_s: 7 * 86400, rate_Hz: 20, period_s: 60 })));
  const db = join(DIR, 'serve-7d.db');
  if (existsSync(db + '.complete')) return db;
  for (const s of ['', '-wal', '-shm']) rmSync(db + s, { force: true });
  const st = join(DIR, 'bench-serve.json');
  writeFileSync(st, JSON.stringify({
    station: 'bench-serve', fibre: { name: 'bench-fibre' }, pendulum: { inertia_kg_m2: 3.6e-5 },
    input: { format: 'lines', columns: ['t_s', 'angle_rad'] }, sensor: { kind: 'angle' }, alerts: { stderr: false },
  }));
  const code = await exitOf(spawn(process.execPath, [BIN, 'import', file, '--station', st, '--db', db, '--started-at', '2026-01-01T00:00:00Z'], { stdio: 'inherit' }));
  if (code !== 0) throw new Error(`import of ${file} exited ${code}`);
  writeFileSync(db + '.complete', '1');
  return db;
}

const exitOf = (c: ChildProcess) => new Promise<number | null>((r) => c.once('exit', (code) => r(code)));

/** Start serve on `db`; resolves with its base address, a promise of its read-ahead's end, and a stop function. */
async function serve(db: string): Promise<{ base: string; readAhead: Promise<void>; stop: () => Promise<number> }> {
  // the CLI reports its peak memory at exit with FIBREWATCH_REPORT_RSS
  const child = spawn(process.execPath, [BIN, 'serve', '--db', db, '--port', '0'], { stdio: ['ignore', 'ignore', 'pipe'], env: { ...process.env, FIBREWATCH_REPORT_RSS: '1' } });
  let err = '';
  child.stderr!.setEncoding('utf8').on('data', (d: string) => (err += d));
  const exited = exitOf(child);
  await waitFor(() => /at http:\/\/\S+:\d+\//.test(err) || child.exitCode !== null, 'serve to listen', 20_000, 10);
  const m = /at http:\/\/\S+?:(\d+)\//.exec(err);
  if (!m) throw new Error(`serve did not start: ${err}`);
  return {
    base: `http://127.0.0.1:${m[1]}`,
    readAhead: waitFor(() => /read ahead \d+ run/.test(err), 'the read-ahead', 120_000, 20),
    stop: async () => {
      if (child.exitCode === null) child.kill('SIGTERM');
      await exited;
      return Number(/maxRSS_bytes=(\d+)/.exec(err)?.[1] ?? NaN);
    },
  };
}

/** One GET, timed: ms to the last byte, and the size. */
async function timed(url: string): Promise<{ ms: number; bytes: number; status: number }> {
  const t0 = performance.now();
  const r = await fetch(url);
  const body = await r.arrayBuffer();
  return { ms: performance.now() - t0, bytes: body.byteLength, status: r.status };
}

const API_PATHS: [string, string][] = [
  ['runs', '/api/runs'],
  ['show', '/api/runs/1'],
  ['windows', '/api/runs/1/windows'],
  ['events', '/api/runs/1/events'],
  ['samples_week_2000', '/api/runs/1/samples?points=2000'],
  ['samples_day_2000', '/api/runs/1/samples?from_s=259200&to_s=345600&points=2000'],
  ['samples_hour_2000', '/api/runs/1/samples?from_s=300000&to_s=303600&points=2000'],
  ['samples_10min_2000', '/api/runs/1/samples?from_s=300000&to_s=300600&points=2000'],
  ['amplitude', '/api/runs/1/amplitude'],
  ['compare', '/api/runs/1/compare'],
  ['fibres', '/api/fibres'],
  ['fibre', '/api/fibres/bench-fibre'],
  ['run_page', '/runs/1'],
];

/**
 * Each API answer for the week-long run: the first request right after the
 * server starts (while it reads ahead), the first after its read-ahead, and
 * again (warm, median of 5).
 */
async function apiFigures(db: string, fig: Record<string, number>): Promise<void> {
  // 1. the first visitor arrives the moment the server starts
  let s = await serve(db);
  try {
    for (const [name, p] of API_PATHS) {
      const r = await timed(s.base + p);
      if (r.status !== 200) throw new Error(`${p}: ${r.status}`);
      fig[`serve_${name}_at_start_ms`] = r.ms;
    }
  } finally {
    await s.stop();
  }
  // 2. the usual case: the server has been up a few seconds
  s = await serve(db);
  try {
    const t0 = performance.now();
    await s.readAhead;
    fig.serve_read_ahead_s = (performance.now() - t0) / 1000;
    let worstFirst = 0, worstWarm = 0;
    for (const [name, p] of API_PATHS) {
      const first = await timed(s.base + p);
      const warm: number[] = [];
      for (let i = 0; i < 5; i++) warm.push((await timed(s.base + p)).ms);
      const w = median(warm);
      fig[`serve_${name}_first_ms`] = first.ms;
      fig[`serve_${name}_warm_ms`] = w;
      worstFirst = Math.max(worstFirst, first.ms);
      worstWarm = Math.max(worstWarm, w);
      process.stdout.write(`GET ${p}: at start ${fig[`serve_${name}_at_start_ms`].toFixed(0)} ms, first after read-ahead ${first.ms.toFixed(1)} ms, warm ${w.toFixed(1)} ms, ${(first.bytes / 1e3).toFixed(0)} kB\n`);
    }
    fig.serve_worst_first_ms = worstFirst;
    fig.serve_worst_warm_ms = worstWarm;
    const noise = await timed(`${s.base}/api/runs/1/noise`);
    fig.serve_noise_s = noise.ms / 1000;
    process.stdout.write(`read-ahead of the newest runs: ${fig.serve_read_ahead_s.toFixed(1)} s after the start\n`);
    process.stdout.write(`GET /api/runs/1/noise (every sample of the week): ${fig.serve_noise_s.toFixed(1)} s\n`);
    fig.serve_peak_rss_MB = (await s.stop()) / 1e6;
    process.stdout.write(`serve's peak memory after these requests (the week's trace, windows and answers kept): ${fig.serve_peak_rss_MB.toFixed(0)} MB\n`);
    process.stdout.write(`goals: every answer ≤ 200 ms (worst ${worstFirst.toFixed(0)} ms first, ${worstWarm.toFixed(0)} ms warm; right at the start: summary ${fig.serve_show_at_start_ms.toFixed(0)} ms, samples ${fig.serve_samples_week_2000_at_start_ms.toFixed(0)} ms), the week's samples at 2,000 points ≤ 100 ms (${fig.serve_samples_week_2000_first_ms.toFixed(1)} ms first, ${fig.serve_samples_week_2000_warm_ms.toFixed(1)} ms warm)\n`);
  } finally {
    await s.stop();
  }
}

/** The week's report: size and time. */
async function reportFigures(db: string, fig: Record<string, number>): Promise<void> {
  const dir = mkdtempSync(join(tmpdir(), 'fw-bench-report-'));
  try {
    const out = join(dir, 'week.html');
    const t0 = performance.now();
    const code = await exitOf(spawn(process.execPath, [BIN, 'report', '1', '--db', db, '--out', out], { stdio: 'ignore' }));
    if (code !== 0) throw new Error(`report exited ${code}`);
    fig.report_week_s = (performance.now() - t0) / 1000;
    fig.report_week_MB = statSync(out).size / 1e6;
    process.stdout.write(`report of the week: ${fig.report_week_MB.toFixed(2)} MB (goal < 3 MB) in ${fig.report_week_s.toFixed(1)} s\n`);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/** record on a pty with `clients` live-stream readers: sample→window latency, and the stream's delivery lag. */
async function liveLatency(clients: number): Promise<{ median_s: number; max_s: number; windows: number; deliver_median_s: number; deliver_max_s: number }> {
  const dir = mkdtempSync(join(tmpdir(), 'fw-bench-serve-live-'));
  const pty = await startPtyPair(dir);
  const rate = 50, T = 2, D = 40;
  try {
    const feed = join(dir, 'feed.csv');
    await writeRecording(feed, { duration_s: D, rate_Hz: rate, period_s: T, decay_time_s: 1e5, seed: 11 });
    const station = join(dir, 'station.json');
    writeFileSync(station, JSON.stringify({
      station: 'serve-bench', fibre: { name: 'serve-bench-fibre' }, pendulum: { inertia_kg_m2: 1e-4 },
      input: { device: pty.devicePath, format: 'lines', columns: ['t_s', 'angle_rad'] }, sensor: { kind: 'angle' },
      analysis: { window_periods: 4, step_periods: 1, period_guess_s: T }, alerts: { stderr: false },
    }));
    const db = join(dir, 'store.db');
    const rec = spawn(process.execPath, [BIN, 'record', '--station', station, '--db', db], { stdio: ['ignore', 'ignore', 'pipe'] });
    let err = '';
    rec.stderr!.setEncoding('utf8').on('data', (d: string) => (err += d));
    await waitFor(() => err.includes('recording run') || rec.exitCode !== null, 'record to start', 20_000, 20);
    // record drops the first line after opening the port (usually torn)
    await writerProcess(pty.feedPath, { bytes: Buffer.from('\n') }).done;
    await waitFor(() => existsSync(db), 'store file', 10_000, 10);
    const srv = await serve(db);
    // the live-stream clients: each notes when it received each window
    const got = new Map<number, number[]>();
    const aborts: AbortController[] = [];
    for (let c = 0; c < clients; c++) {
      const ac = new AbortController();
      aborts.push(ac);
      void (async () => {
        try {
          const r = await fetch(`${srv.base}/api/runs/1/stream`, { signal: ac.signal });
          const dec = new TextDecoder();
          let buf = '';
          for await (const part of r.body!) {
            buf += dec.decode(part as Uint8Array, { stream: true });
            let i: number;
            while ((i = buf.indexOf('\n\n')) >= 0) {
              const frame = buf.slice(0, i);
              buf = buf.slice(i + 2);
              const m = /^event: window\ndata: (.*)$/s.exec(frame);
              if (m) {
                const idx = (JSON.parse(m[1]) as { index: number }).index;
                (got.get(idx) ?? got.set(idx, []).get(idx)!).push(Date.now());
              }
            }
          }
        } catch {
          // aborted at the end
        }
      })();
    }
    await new Promise((r) => setTimeout(r, 500));
    const w = writerProcess(pty.feedPath, { file: feed, rate_per_s: rate, waitGo: true });
    await w.ready;
    const wall0 = Date.now();
    w.go();
    // poll the store for new windows, as bench/latency.ts does
    const seen = new Map<number, { appeared: number; t_end_s: number }>();
    const ro = new Database(db, { readonly: true, fileMustExist: true });
    const q = ro.prepare('SELECT idx AS i, t_end_s FROM windows WHERE idx > ?');
    let last = -1, done = false;
    void w.done.then(() => setTimeout(() => (done = true), 2500));
    while (!done) {
      const now = Date.now();
      for (const r of q.all(last) as { i: number; t_end_s: number }[]) {
        if (!seen.has(r.i)) seen.set(r.i, { appeared: now, t_end_s: r.t_end_s });
        last = Math.max(last, r.i);
      }
      await new Promise((r) => setTimeout(r, 10));
    }
    ro.close();
    for (const a of aborts) a.abort();
    await srv.stop();
    rec.kill('SIGINT');
    await exitOf(rec);
    const lat = [...seen.values()].map((s) => (s.appeared - (wall0 + s.t_end_s * 1000)) / 1000).sort((a, b) => a - b);
    if (!lat.length) throw new Error(`no windows stored: ${err}`);
    const deliver: number[] = [];
    for (const [i, s] of seen) for (const t of got.get(i) ?? []) deliver.push((t - s.appeared) / 1000);
    if (clients > 0 && deliver.length < 0.8 * clients * seen.size) throw new Error(`the stream delivered ${deliver.length} of ${clients * seen.size} windows`);
    deliver.sort((a, b) => a - b);
    return {
      median_s: lat[lat.length >> 1], max_s: lat[lat.length - 1], windows: lat.length,
      deliver_median_s: deliver.length ? deliver[deliver.length >> 1] : NaN, deliver_max_s: deliver.length ? deliver[deliver.length - 1] : NaN,
    };
  } finally {
    await pty.stop();
    rmSync(dir, { recursive: true, force: true });
  }
}

/** All serve figures (ms, s, MB). */
export async function benchServe(): Promise<Record<string, number>> {
  const fig: Record<string, number> = {};
  const db = await weekStore();
  process.stdout.write(`store: ${db} (${(statSync(db).size / 1e6).toFixed(0)} MB)\n`);
  await apiFigures(db, fig);
  await reportFigures(db, fig);
  for (const clients of [0, 20]) {
    const r = await liveLatency(clients);
    fig[`live_${clients}_clients_latency_median_s`] = r.median_s;
    fig[`live_${clients}_clients_latency_max_s`] = r.max_s;
    if (clients) {
      fig[`live_${clients}_clients_delivery_median_s`] = r.deliver_median_s;
      fig[`live_${clients}_clients_delivery_max_s`] = r.deliver_max_s;
    }
    process.stdout.write(`record with ${clients} live-stream clients: ${r.windows} windows, sample→window median ${r.median_s.toFixed(3)} s, max ${r.max_s.toFixed(3)} s (goal median ≤ 1 s)${clients ? `; stored→delivered median ${r.deliver_median_s.toFixed(3)} s, max ${r.deliver_max_s.toFixed(3)} s (goal ≤ 2 s)` : ''}\n`);
  }
  return fig;
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  benchServe().then((f) => console.log(f));
}
