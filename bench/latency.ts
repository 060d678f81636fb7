/**
 * Latency of the live path: during a real `fibrewatch record` on a socat
 * pseudo-terminal, the time from the bytes of a window's last sample being
 * written into the line to that window's result row being in the store
 * (polled with a read-only connection). Goal: ≤ 1 s after the window closes.
 * Runnable alone: `npx tsx bench/latency.ts`.
 */
import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync, existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import Database from 'better-sqlite3';
import { startPtyPair, waitFor } from '../drivers/pty-pair.js';
import { encodeLines } from '../drivers/wire-encode.js';
import { Rng } from '../src/analysis/rng.js';

const BIN = fileURLToPath(new URL('../bin/fibrewatch.js', import.meta.url));

/** Options of benchLatency (SI units). */
export interface LatencyOptions {
  /** wall time of the paced feed, s (default 40) */
  duration_s?: number;
  /** sample rate, Hz (default 50) */
  rate_Hz?: number;
  /** swing period, s (default 2: short windows so many close during the run) */
  period_s?: number;
}

// the writer paces the lines in real time and reports the wall time (ms since the epoch) its t = 0 corresponds to
const WRITER = `
const fs = require('fs');
const [feed, src] = process.argv.slice(1);
const lines = fs.readFileSync(src, 'utf8').split('\\n').filter(Boolean);
const fd = fs.openSync(feed, 'w');
fs.writeSync(fd, '\\n'); // record drops the first line after opening the port as torn
const t = lines.map((l) => Number(l.split(',')[0]));
const t0 = Date.now();
process.stdout.write(String(t0) + '\\n');
let i = 0;
const tick = () => {
  const now = (Date.now() - t0) / 1000;
  let j = i;
  while (j < lines.length && t[j] <= now) j++;
  if (j > i) { fs.writeSync(fd, lines.slice(i, j).join('\\n') + '\\n'); i = j; }
  if (i < lines.length) setTimeout(tick, 5); else { fs.closeSync(fd); process.exit(0); }
};
tick();
`;

/** Measure window-result latency during a live record; returns median and max, s. */
export async function benchLatency(opts: LatencyOptions = {}): Promise<Record<string, number>> {
  const D = opts.duration_s ?? 40;
  const rate = opts.rate_Hz ?? 50;
  const T = opts.period_s ?? 2;
  const dir = mkdtempSync(join(tmpdir(), 'fw-bench-latency-'));
  const pty = await startPtyPair(dir);
  try {
    const n = Math.round(D * rate);
    const t = new Float64Array(n), y = new Float64Array(n);
    const rng = new Rng(3);
    for (let i = 0; i < n; i++) {
      t[i] = i / rate;
      y[i] = Math.round((1e-3 * Math.cos((2 * Math.PI * t[i]) / T) + 1e-6 * rng.normal()) * 1e11) / 1e11;
    }
    const src = join(dir, 'lines.csv');
    writeFileSync(src, encodeLines(t, { angle_rad: y }, ['t_s', 'angle_rad']));
    const station = join(dir, 'station.json');
    writeFileSync(station, JSON.stringify({
      station: 'latency-bench', fibre: { name: 'latency-fibre' }, pendulum: { inertia_kg_m2: 1e-4 },
      input: { device: pty.devicePath, format: 'lines', columns: ['t_s', 'angle_rad'] }, sensor: { kind: 'angle' },
      analysis: { window_periods: 4, step_periods: 1, period_guess_s: T },
    }));
    const db = join(dir, 'store.db');
    const rec = spawn(process.execPath, [BIN, 'record', '--station', station, '--db', db], { stdio: ['ignore', 'ignore', 'pipe'] });
    let err = '';
    rec.stderr!.setEncoding('utf8').on('data', (d: string) => (err += d));
    await waitFor(() => err.includes('recording run') || rec.exitCode !== null, 'record to start', 20_000, 20);
    if (rec.exitCode !== null) throw new Error(`record exited: ${err}`);

    const w = spawn(process.execPath, ['-e', WRITER, pty.feedPath, src], { stdio: ['ignore', 'pipe', 'inherit'] });
    let wOut = '';
    w.stdout!.setEncoding('utf8').on('data', (d: string) => (wOut += d));
    const wDone = new Promise<void>((r) => w.once('exit', () => r()));
    await waitFor(() => wOut.includes('\n'), 'writer start', 10_000, 5);
    const wall0 = Number(wOut.trim());

    // poll the store read-only for new window rows; note when each first appears
    await waitFor(() => existsSync(db), 'store file', 10_000, 10);
    const seen = new Map<number, { appeared: number; t_end_s: number }>();
    let done = false;
    wDone.then(() => setTimeout(() => (done = true), 2000));
    const ro = new Database(db, { readonly: true, fileMustExist: true });
    const q = ro.prepare('SELECT idx AS i, t_end_s FROM windows WHERE idx > ?');
    let last = -1;
    while (!done) {
      let rows: { i: number; t_end_s: number }[] = [];
      try {
        rows = q.all(last) as { i: number; t_end_s: number }[];
      } catch {
        // the schema may not be there on the first polls
      }
      const now = Date.now();
      for (const r of rows) {
        if (!seen.has(r.i)) seen.set(r.i, { appeared: now, t_end_s: r.t_end_s });
        last = Math.max(last, r.i);
      }
      await new Promise((r) => setTimeout(r, 10));
    }
    ro.close();
    rec.kill('SIGINT');
    await new Promise<void>((r) => rec.once('exit', () => r()));

    // the window's last sample was written at wall0 + t_end_s (paced writer, 5 ms ticks)
    const lat = [...seen.values()].map((s) => (s.appeared - (wall0 + s.t_end_s * 1000)) / 1000).sort((a, b) => a - b);
    if (!lat.length) throw new Error(`no windows stored during the run: ${err}`);
    const median = lat[Math.floor(lat.length / 2)];
    const max = lat[lat.length - 1];
    process.stdout.write(`record latency, last sample written → window row stored: ${lat.length} windows, median ${median.toFixed(3)} s, max ${max.toFixed(3)} s (goal ≤ 1 s)\n`);
    return { latency_windows: lat.length, latency_median_s: median, latency_max_s: max };
  } finally {
    await pty.stop();
    rmSync(dir, { recursive: true, force: true });
  }
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  benchLatency().then((f) => console.log(f));
}
