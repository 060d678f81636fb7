/**
 * Issue figures for acquisition: decode + convert + store throughput from a
 * file for `lines` and `frames`, bytes on disk per stored angle sample, and the
 * peak memory of `fibrewatch import` on a 10-million-sample file (a child
 * process reports its own maxRSS).
 */
import { mkdtempSync, rmSync, statSync, writeFileSync, openSync, writeSync, closeSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { parseStation, type Station } from '../src/config/station.js';
import { encodeFrames, encodeLines } from '../drivers/wire-encode.js';
import { replayFile } from '../drivers/replay.js';
import { openStore, checkpoint } from '../db/open.js';
import { RunSession } from '../src/app/run-session.js';
import { Acquisition } from '../src/app/acquisition.js';

const FS = 20; // Hz
const T = 60; // s

/** A damped sine with noise, written as `t_s,angle_rad` lines in blocks. */
function writeLinesFile(path: string, n: number): void {
  const fd = openSync(path, 'w');
  const B = 100_000;
  let seed = 12345;
  const rnd = () => ((seed = (seed * 1103515245 + 12345) >>> 0) / 4294967296) - 0.5;
  for (let i0 = 0; i0 < n; i0 += B) {
    const m = Math.min(B, n - i0);
    const t = new Float64Array(m), a = new Float64Array(m);
    for (let i = 0; i < m; i++) {
      const ts = (i0 + i) / FS;
      t[i] = Math.round(ts * 1000) / 1000;
      a[i] = Number((1e-3 * Math.exp(-ts / 4e5) * Math.cos((2 * Math.PI * ts) / T) + 3e-7 * rnd()).toPrecision(7));
    }
    writeSync(fd, encodeLines(t, { angle_rad: a }, ['t_s', 'angle_rad']));
  }
  closeSync(fd);
}

/** One-channel encoder frames at 1 kHz. */
function writeFramesFile(path: string, n: number): void {
  const fd = openSync(path, 'w');
  const B = 100_000;
  for (let i0 = 0; i0 < n; i0 += B) {
    const m = Math.min(B, n - i0);
    const tu = new Float64Array(m), c = new Int32Array(m);
    for (let i = 0; i < m; i++) {
      const ts = (i0 + i) / 1000;
      tu[i] = Math.round(ts * 1e6);
      c[i] = Math.round(2000 * Math.cos((2 * Math.PI * ts) / 5));
    }
    writeSync(fd, encodeFrames(i0, tu, [c]));
  }
  closeSync(fd);
}

async function ingest(station: Station, file: string, dbFile: string): Promise<{ samples: number; seconds: number }> {
  const db = openStore(dbFile);
  const session = new RunSession(db, station, { source: 'file', sourcePath: file, startedAt_ms: Date.UTC(2026, 0, 1) });
  const acq = new Acquisition(station, session);
  const t0 = performance.now();
  await replayFile(file, acq.decoder, (r) => acq.handle(r), { chunkBytes: 1 << 20 });
  await acq.end();
  session.close('complete');
  const seconds = (performance.now() - t0) / 1000;
  checkpoint(db);
  db.close();
  return { samples: session.samples, seconds };
}

export async function benchIngest(): Promise<Record<string, number>> {
  const dir = mkdtempSync(join(tmpdir(), 'fw-bench-ingest-'));
  const out: Record<string, number> = {};
  try {
    const N = Number(process.env.BENCH_SAMPLES ?? 10_000_000);
    const linesFile = join(dir, 'angle.txt');
    const framesFile = join(dir, 'enc.bin');
    writeLinesFile(linesFile, N);
    writeFramesFile(framesFile, N);
    const lines = parseStation({ station: 'bench', fibre: { name: 'bench-fibre' }, input: { format: 'lines', columns: ['t_s', 'angle_rad'] }, sensor: { kind: 'angle' } });
    const frames = parseStation({ station: 'bench', fibre: { name: 'bench-fibre' }, input: { format: 'frames', channels: [{ role: 'counts', scale: 1 }] }, sensor: { kind: 'encoder', counts_per_rev: 2 ** 20 } });

    const l = await ingest(lines, linesFile, join(dir, 'lines.db'));
    const dbBytes = statSync(join(dir, 'lines.db')).size;
    out.lines_samples_per_s = l.samples / l.seconds;
    out.bytes_per_angle_sample = dbBytes / l.samples;
    process.stdout.write(`lines : ${l.samples} samples (${(statSync(linesFile).size / 1e6).toFixed(0)} MB) in ${l.seconds.toFixed(2)} s = ${(out.lines_samples_per_s / 1e6).toFixed(2)} M samples/s (goal ≥ 2 M)\n`);
    process.stdout.write(`store : ${(dbBytes / 1e6).toFixed(1)} MB on disk = ${out.bytes_per_angle_sample.toFixed(2)} bytes per angle sample (goal ≤ 6)\n`);

    const f = await ingest(frames, framesFile, join(dir, 'frames.db'));
    out.frames_samples_per_s = f.samples / f.seconds;
    process.stdout.write(`frames: ${f.samples} samples in ${f.seconds.toFixed(2)} s = ${(out.frames_samples_per_s / 1e6).toFixed(2)} M samples/s (goal ≥ 5 M; angle + raw counts stored)\n`);

    // peak memory of the real command on the 10 M-sample lines file
    const stationFile = join(dir, 'station.json');
    writeFileSync(stationFile, JSON.stringify({ station: 'bench', fibre: { name: 'bench-fibre' }, input: { format: 'lines', columns: ['t_s', 'angle_rad'] }, sensor: { kind: 'angle' } }));
    const bin = fileURLToPath(new URL('../bin/fibrewatch.js', import.meta.url));
    const t0 = performance.now();
    const r = spawnSync(process.execPath, [bin, 'import', linesFile, '--station', stationFile, '--db', join(dir, 'cmd.db'), '--started-at', '2026-01-01T00:00:00Z', '--json'], {
      env: { ...process.env, FIBREWATCH_REPORT_RSS: '1' }, encoding: 'utf8', maxBuffer: 1 << 26,
    });
    const secs = (performance.now() - t0) / 1000;
    const m = /maxRSS_bytes=(\d+)/.exec(r.stderr ?? '');
    if (r.status !== 0 || !m) throw new Error(`import failed (${r.status}): ${r.stderr}`);
    out.import_peak_rss_MB = Number(m[1]) / 1e6;
    out.import_command_s = secs;
    process.stdout.write(`import: fibrewatch import of ${N} samples (full pipeline) took ${secs.toFixed(1)} s, peak RSS ${out.import_peak_rss_MB.toFixed(0)} MB (goal ≤ 200 MB)\n`);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  return out;
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) benchIngest();
