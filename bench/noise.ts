/**
 * `fibrewatch noise` figures, measured on the real CLI in a child process:
 * wall time and peak RSS of the noise budget of a 7-day run at 20 Hz (the
 * import bench's recording: `t_s,angle_rad`, period 60 s, 4-period windows),
 * and of a 1-day run beside it (memory must not grow with the run's length).
 * Goal: 7 days ≤ 10 s in ≤ 200 MB.
 * The recordings are bench/import.ts's, kept in $TMPDIR/fibrewatch-bench-import
 * (generated here when absent); the imported stores are kept there too, so
 * only the first run pays for the imports.
 * Runnable alone: `npx tsx bench/noise.ts` (after `npm run build`).
 */
import { spawn } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { writeRecording } from './recording-file.js';

const BIN = fileURLToPath(new URL('../bin/fibrewatch.js', import.meta.url));
const DIR = join(tmpdir(), 'fibrewatch-bench-import');
const RATE_Hz = 20;

interface CliRun {
  wall_s: number;
  maxRSS_bytes: number;
  stdout: string;
}

/** Run the built CLI to completion, timing it; the CLI reports its peak RSS on stderr with FIBREWATCH_REPORT_RSS=1. */
function runCli(args: string[]): Promise<CliRun> {
  return new Promise((resolve, reject) => {
    const t0 = performance.now();
    const child = spawn(process.execPath, [BIN, ...args], { env: { ...process.env, FIBREWATCH_REPORT_RSS: '1' }, stdio: ['ignore', 'pipe', 'pipe'] });
    let out = '', err = '';
    child.stdout.setEncoding('utf8').on('data', (d: string) => (out += d));
    child.stderr.setEncoding('utf8').on('data', (d: string) => (err += d));
    child.once('exit', (code) => {
      const wall_s = (performance.now() - t0) / 1000;
      const m = /maxRSS_bytes=(\d+)/.exec(err);
      if (code !== 0 || !m) return reject(new Error(`fibrewatch ${args[0]} exited ${code}: ${err.slice(-1000)}`));
      resolve({ wall_s, maxRSS_bytes: Number(m[1]), stdout: out });
    });
  });
}

/** The import bench's recording of `days` (the same file name and content), generated when absent. */
async function recording(days: number): Promise<string> {
  const path = join(DIR, `angle-${days}d-${RATE_Hz}hz.csv`);
  if (!existsSync(path + '.complete')) {
    const n = await writeRecording(path, { duration_s: days * 86400, rate_Hz: RATE_Hz, period_s: 60 });
    writeFileSync(path + '.complete', String(n));
  }
  return path;
}

/** A store holding the recording imported as run 1, kept between bench runs (keyed by the recording's size). */
async function importedStore(days: number): Promise<string> {
  const file = await recording(days);
  const db = join(DIR, `noise-${days}d.db`);
  const marker = db + '.complete';
  const key = String(statSync(file).size);
  if (existsSync(marker) && existsSync(db) && readFileSync(marker, 'utf8') === key) return db;
  for (const s of ['', '-wal', '-shm']) rmSync(db + s, { force: true });
  const st = join(DIR, 'bench-noise.json');
  writeFileSync(st, JSON.stringify({
    station: 'bench-noise', fibre: { name: 'bench-fibre' }, pendulum: { inertia_kg_m2: 3.6e-5 },
    input: { format: 'lines', columns: ['t_s', 'angle_rad'] }, sensor: { kind: 'angle' },
    analysis: { window_periods: 4, step_periods: 1 }, alerts: { stderr: false },
  }));
  const t0 = performance.now();
  await runCli(['import', file, '--station', st, '--db', db, '--started-at', '2026-01-01T00:00:00Z']);
  process.stdout.write(`imported ${file} into ${db} in ${((performance.now() - t0) / 1000).toFixed(1)} s (kept for the next run)\n`);
  writeFileSync(marker, key);
  return db;
}

/** The noise figures (seconds, MB, ratios). */
export async function benchNoise(): Promise<Record<string, number>> {
  mkdirSync(DIR, { recursive: true });
  const fig: Record<string, number> = {};
  const MB = 1e6;
  for (const days of [1, 7]) {
    const db = await importedStore(days);
    const r = await runCli(['noise', '1', '--db', db, '--json']);
    const b = JSON.parse(r.stdout) as { frequency_Hz: number[]; readout_asd_rad_per_rtHz: number | null; allan: { equilibrium: { tau_s: number[] } } };
    fig[`noise_${days}d_wall_s`] = r.wall_s;
    fig[`noise_${days}d_peak_rss_MB`] = r.maxRSS_bytes / MB;
    fig[`noise_${days}d_bands`] = b.frequency_Hz.length;
    process.stdout.write(`noise ${days} d (${(days * 86400 * RATE_Hz / 1e6).toFixed(2)} M samples): ${r.wall_s.toFixed(2)} s, peak RSS ${(r.maxRSS_bytes / MB).toFixed(0)} MB; ${b.frequency_Hz.length} bands from ${b.frequency_Hz[0]?.toExponential(2)} Hz, readout ${b.readout_asd_rad_per_rtHz?.toExponential(2)} rad/√Hz, ${b.allan.equilibrium.tau_s.length} Allan τ\n`);
  }
  fig.noise_rss_7d_over_1d = fig.noise_7d_peak_rss_MB / fig.noise_1d_peak_rss_MB;
  process.stdout.write(`7-day: ${fig.noise_7d_wall_s <= 10 ? 'meets' : 'misses'} the 10 s goal, ${fig.noise_7d_peak_rss_MB <= 200 ? 'meets' : 'misses'} 200 MB; RSS 7 d / 1 d = ${fig.noise_rss_7d_over_1d.toFixed(3)}\n`);
  return fig;
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  benchNoise().then((f) => console.log(f));
}
