/**
 * Replugs during a real `fibrewatch record` (the built CLI) on a socat
 * pseudo-terminal: an instrument process (test/helpers/pty-writer.mjs) writes
 * lines at 50 or 200 Hz and keeps writing across each unplug, skipping the
 * lines that fall due while the device is away, as a real one would lose
 * them. Each replug ends socat (the device path vanishes), waits 1 s and
 * starts it again at the same paths.
 *
 * Figures per rate: samples lost per replug (all, and beyond those the
 * instrument could not send while away: the goal is ≤ 10 at 50 Hz), and the
 * reopen latency from the device path's return to record's reopen (median,
 * max). The station keeps the default reconnect backoff (0.25 s up to 10 s).
 * Runnable alone: `npx tsx bench/replug.ts` (after `npm run build`).
 */
import { spawn } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import Database from 'better-sqlite3';
import { startPtyPair, waitFor, type PtyPair } from '../drivers/pty-pair.js';
import { writerProcess } from '../test/helpers/pty.js';
import { median } from '../src/analysis/median.js';

const BIN = fileURLToPath(new URL('../bin/fibrewatch.js', import.meta.url));
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

/** Options of benchReplug. */
export interface ReplugOptions {
  /** sample rates, Hz (default 50 and 200) */
  rates_Hz?: number[];
  /** replugs per rate (default 10) */
  replugs?: number;
  /** time the device stays away, s (default 1) */
  away_s?: number;
  /** data time between replugs, s (default 2) */
  between_s?: number;
}

interface RateResult {
  lost: number;
  beyond: number;
  latencies_s: number[];
  written: number;
  skipped: number;
  stored: number;
}

/** Wait until the device link exists again; returns the time it did (ms, performance clock). */
function linkBack(path: string): { at: Promise<number>; cancel: () => void } {
  let timer: NodeJS.Timeout | undefined;
  const at = new Promise<number>((resolve) => {
    timer = setInterval(() => {
      if (existsSync(path)) {
        clearInterval(timer);
        resolve(performance.now());
      }
    }, 1);
  });
  return { at, cancel: () => clearInterval(timer) };
}

async function atRate(rate_Hz: number, replugs: number, away_s: number, between_s: number): Promise<RateResult> {
  const dir = mkdtempSync(join(tmpdir(), 'fw-bench-replug-'));
  let pty: PtyPair | undefined = await startPtyPair(dir);
  writeFileSync(join(dir, 'station.json'), JSON.stringify({
    station: `replug-${rate_Hz}`, fibre: { name: 'replug-fibre' },
    input: { device: pty.devicePath, format: 'lines', columns: ['t_s', 'angle_rad'] }, sensor: { kind: 'angle' },
  }));
  const db = join(dir, 'store.db');
  const child = spawn(process.execPath, [BIN, 'record', '--station', join(dir, 'station.json'), '--db', db], { stdio: ['ignore', 'ignore', 'pipe'] });
  let err = '';
  const ups: number[] = [];
  child.stderr!.setEncoding('utf8').on('data', (d: string) => {
    err += d;
    for (const _ of d.matchAll(/back after/g)) ups.push(performance.now());
  });
  try {
    await waitFor(() => err.includes('recording run') || child.exitCode !== null, 'record to start', 20_000, 10);
    if (child.exitCode !== null) throw new Error(`record exited: ${err}`);
    // record drops the first line after opening the port as torn: give it an empty one
    await writerProcess(pty.feedPath, { bytes: Buffer.from('\n') }).done;
    const w = writerProcess(pty.feedPath, { rate_per_s: rate_Hz, reopen: true, waitPath_s: 60 });
    await w.ready;
    await sleep(between_s * 1000);
    const latencies_s: number[] = [];
    for (let k = 0; k < replugs; k++) {
      await pty.stop();
      pty = undefined;
      await waitFor(() => (err.match(/ lost \(/g) ?? []).length >= k + 1, `record to see unplug ${k + 1}`, 10_000, 5);
      await sleep(away_s * 1000);
      const back = linkBack(join(dir, 'dev'));
      pty = await startPtyPair(dir);
      const t_back = await back.at;
      await waitFor(() => ups.length >= k + 1, `reopen ${k + 1}`, 30_000, 1);
      latencies_s.push((ups[k] - t_back) / 1000);
      await sleep(between_s * 1000);
    }
    const res = await w.finish();
    await sleep(1500); // the last lines cross and commit
    child.kill('SIGTERM');
    await new Promise((r) => child.once('exit', r));
    const d = new Database(db, { readonly: true });
    const stored = (d.prepare('SELECT samples FROM runs').get() as { samples: number }).samples;
    d.close();
    const lost = res.written - stored;
    return { lost: lost / replugs, beyond: (lost - res.skipped) / replugs, latencies_s, written: res.written, skipped: res.skipped, stored };
  } finally {
    if (child.exitCode === null) child.kill('SIGKILL');
    await pty?.stop();
    rmSync(dir, { recursive: true, force: true });
  }
}

/** Samples lost per replug and reopen latency at each rate. */
export async function benchReplug(opts: ReplugOptions = {}): Promise<Record<string, number>> {
  const rates = opts.rates_Hz ?? [50, 200];
  const n = opts.replugs ?? 10;
  const out: Record<string, number> = {};
  for (const rate of rates) {
    const r = await atRate(rate, n, opts.away_s ?? 1, opts.between_s ?? 2);
    process.stdout.write(
      `${rate} Hz, ${n} replugs of ${opts.away_s ?? 1} s: ${r.written} lines due, ${r.skipped} not sent while away, ${r.stored} stored; `
      + `lost per replug ${r.lost.toFixed(1)} (${r.beyond.toFixed(1)} beyond the absence); `
      + `reopen after the path returned: median ${(median([...r.latencies_s]) * 1000).toFixed(0)} ms, max ${(Math.max(...r.latencies_s) * 1000).toFixed(0)} ms\n`,
    );
    out[`lost_per_replug_${rate}Hz`] = r.lost;
    out[`lost_beyond_absence_per_replug_${rate}Hz`] = r.beyond;
    out[`reopen_median_s_${rate}Hz`] = median([...r.latencies_s]);
    out[`reopen_max_s_${rate}Hz`] = Math.max(...r.latencies_s);
  }
  return out;
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  benchReplug().then((f) => console.log(f), (e) => {
    console.error(e);
    process.exitCode = 1;
  });
}
