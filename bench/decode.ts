/**
 * Decode benchmark: replay + decode + sensor conversion of a `lines` file
 * (t_s,angle_rad) and a `frames` file (1 channel), in samples per second.
 * Run alone: `npx tsx bench/decode.ts` (the store is added by the full bench).
 */
import { closeSync, mkdtempSync, openSync, rmSync, writeSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { LinesDecoder } from '../drivers/lines-decoder.js';
import { FramesDecoder } from '../drivers/frames-decoder.js';
import type { Decoder } from '../drivers/decoder.js';
import { replayFile } from '../drivers/replay.js';
import { makeConverter } from '../drivers/sensor.js';
import { encodeFrames, encodeLines } from '../drivers/wire-encode.js';

const N = 2_000_000;
const PIECE = 100_000;

/** A damped swing sampled at 100 Hz, for demo data (our own scenario). */
function swing(i0: number, n: number): { t: Float64Array; angle: Float64Array } {
  const t = new Float64Array(n);
  const angle = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const k = i0 + i;
    t[i] = k / 100;
    angle[i] = 2e-3 * Math.exp(-t[i] / 5000) * Math.cos((2 * Math.PI * t[i]) / 60) + 1e-4;
  }
  return { t, angle };
}

function writeLines(path: string, digits: number | undefined): void {
  const fd = openSync(path, 'w');
  for (let i0 = 0; i0 < N; i0 += PIECE) {
    const { t, angle } = swing(i0, PIECE);
    writeSync(fd, encodeLines(t, { angle_rad: angle }, ['t_s', 'angle_rad'], { digits }));
  }
  closeSync(fd);
}

function writeFrames(path: string): void {
  const fd = openSync(path, 'w');
  for (let i0 = 0; i0 < N; i0 += PIECE) {
    const tus = new Float64Array(PIECE);
    const v = new Int32Array(PIECE);
    for (let i = 0; i < PIECE; i++) {
      tus[i] = (i0 + i) * 1000; // 1 kHz; passes the u32 wrap at 4295 s
      v[i] = Math.round(1e6 * Math.sin((i0 + i) * 1e-3));
    }
    writeSync(fd, encodeFrames(i0, tus, [v]));
  }
  closeSync(fd);
}

async function run(path: string, decoder: Decoder): Promise<{ rate: number; cpuRate: number; samples: number }> {
  const convert = makeConverter({ kind: 'angle' });
  let samples = 0;
  let check = 0;
  const t0 = performance.now();
  const c0 = process.cpuUsage();
  await replayFile(path, decoder, (r) => {
    for (const b of r.blocks) {
      const a = convert(b);
      samples += a.n;
      check += a.angle[a.n - 1];
    }
  });
  const s = (performance.now() - t0) / 1000;
  const cpu = process.cpuUsage(c0);
  if (samples !== N || !Number.isFinite(check)) throw new Error(`bench: decoded ${samples} of ${N} samples`);
  // CPU time (user + system, all threads of the process) as well as wall time: on a shared machine the wall clock also counts other processes
  return { rate: samples / s, cpuRate: samples / ((cpu.user + cpu.system) / 1e6), samples };
}

/** Sensor conversion alone for a split photodiode (erfinv per sample), on in-memory blocks. */
function benchSplitPhotodiode(): number {
  const conv = makeConverter({ kind: 'split-photodiode', lever_arm_m: 0.8, beam_radius_m: 1e-3, saturation: 0.98 });
  const n = 4096;
  const a = new Float64Array(n);
  const b = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const s = 0.9 * Math.sin(i * 0.01);
    a[i] = 1 + s;
    b[i] = 1 - s;
  }
  const block = { n, t: new Float64Array(n), clock: 'device' as const, host_ms: 0, channels: { a, b } };
  const blocks = 100;
  const c0 = process.cpuUsage();
  let check = 0;
  for (let k = 0; k < blocks; k++) check += conv(block).angle[k];
  const cpu = process.cpuUsage(c0);
  if (!Number.isFinite(check)) throw new Error('bench: split-photodiode conversion gave NaN');
  return (blocks * n) / ((cpu.user + cpu.system) / 1e6);
}

/** Write the temp files, time replay+decode+convert for each, print and return samples/s. */
export async function benchDecode(): Promise<Record<string, number>> {
  const dir = mkdtempSync(join(tmpdir(), 'fibrewatch-bench-'));
  const figures: Record<string, number> = {};
  try {
    const device = join(dir, 'device.csv');
    const full = join(dir, 'full.csv');
    const frames = join(dir, 'frames.bin');
    writeLines(device, 9); // a device printing 9 significant digits
    writeLines(full, undefined); // shortest round-trip text of every float64 (up to 17 digits)
    writeFrames(frames);
    for (let rep = 0; rep < 2; rep++) {
      // the first round warms the JIT; the second is reported
      const a = await run(device, new LinesDecoder({ columns: ['t_s', 'angle_rad'], separator: ',' }));
      const b = await run(full, new LinesDecoder({ columns: ['t_s', 'angle_rad'], separator: ',' }));
      const c = await run(frames, new FramesDecoder({ channels: [{ role: 'angle_rad', scale: 1e-9 }] }));
      figures['lines_9digits_samples_per_s'] = a.rate;
      figures['lines_9digits_samples_per_cpu_s'] = a.cpuRate;
      figures['lines_17digits_samples_per_s'] = b.rate;
      figures['lines_17digits_samples_per_cpu_s'] = b.cpuRate;
      figures['frames_1ch_samples_per_s'] = c.rate;
      figures['frames_1ch_samples_per_cpu_s'] = c.cpuRate;
      figures['split_photodiode_convert_samples_per_cpu_s'] = benchSplitPhotodiode();
    }
    console.log(`decode + convert, ${N} samples each (t_s,angle_rad lines; 1-channel frames), replayed from a temp file:`);
    for (const [k, v] of Object.entries(figures)) console.log(`  ${k.padEnd(36)} ${(v / 1e6).toFixed(2)} M`);
    return figures;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  benchDecode().catch((e) => {
    console.error(e);
    process.exit(1);
  });
}
