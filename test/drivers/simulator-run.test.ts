import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { PassThrough, Writable } from 'node:stream';
import { SerialPort } from 'serialport';
import { afterAll, describe, expect, it } from 'vitest';
import type { RawBlock } from '../../src/domain/block.js';
import { parseStation } from '../../src/config/station.js';
import { makeDecoder } from '../../drivers/make-decoder.js';
import { makeConverter } from '../../drivers/sensor.js';
import { runSimulator } from '../../drivers/simulator/run-simulator.js';
import { loadScenario, parseScenario } from '../../drivers/simulator/scenario.js';
import { simulateToArrays } from '../helpers/simulate-arrays.js';
import { stationForScenario } from '../helpers/station-for-scenario.js';
import { FLAG_SATURATED } from '../../src/domain/block.js';

const scenarios = new URL('../../drivers/simulator/scenarios/', import.meta.url).pathname;
const tmp = mkdtempSync(join(tmpdir(), 'fw-sim-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

/** Collects everything written to it. */
function sink(): { stream: PassThrough; bytes: () => Buffer } {
  const stream = new PassThrough();
  const parts: Buffer[] = [];
  stream.on('data', (c: Buffer) => parts.push(c));
  return { stream, bytes: () => Buffer.concat(parts) };
}

/** Decode bytes with the real decoders into one concatenated block of time and channels. */
function decodeAll(station: unknown, bytes: Uint8Array, chunk = 997) {
  const st = parseStation(station);
  const dec = makeDecoder(st, { hostClock: () => 0 });
  const blocks: RawBlock[] = [];
  for (let o = 0; o < bytes.length; o += chunk) blocks.push(...dec.push(bytes.subarray(o, o + chunk), 0).blocks);
  blocks.push(...dec.flush(0).blocks);
  const conv = makeConverter(st.sensor);
  const t: number[] = [];
  const angle: number[] = [];
  const flags: number[] = [];
  for (const b of blocks) {
    const a = conv(b);
    for (let i = 0; i < b.n; i++) { t.push(b.t[i]); angle.push(a.angle[i]); flags.push(a.flags[i]); }
  }
  return { t, angle, flags, stats: dec.stats, blocks };
}

describe('simulator onto the wire', () => {
  it('lines output decodes back to the simulated samples, dropouts leave no samples', async () => {
    const sc = parseScenario({
      name: 'lines-roundtrip', duration_s: 120, sample_rate_Hz: 10, inertia_kg_m2: 1e-4, kappa_Nm_per_rad: 1e-4 * (2 * Math.PI / 10) ** 2,
      q: 500, temperature_K: 295, initial: { amplitude_rad: 0.002 }, angle_noise_rad: 1e-7,
      dropouts: [{ t_s: 30, duration_s: 7.5 }, { t_s: 100, duration_s: 0.25 }], temperature_channel: { noise_K: 0.01 },
      output: { columns: ['t_s', 'angle_rad', 'temp_C'] },
    });
    const s = sink();
    const r = await runSimulator({ scenario: sc, out: s.stream, speed: Infinity, seed: 3 });
    const truth = simulateToArrays(sc, 3);
    expect(r.samples).toBe(1200 - 75 - 3);
    expect(r.samples).toBe(truth.t.length);
    expect(r.bytes).toBe(s.bytes().length);
    const d = decodeAll({ station: 'x', fibre: { name: 'f' }, input: { columns: ['t_s', 'angle_rad', 'temp_C'] } }, s.bytes());
    expect(d.stats.badRecords).toBe(0);
    expect(d.t.length).toBe(r.samples);
    let mismatches = 0;
    for (let i = 0; i < d.t.length; i++) if (d.t[i] !== truth.t[i] || d.angle[i] !== truth.channels.angle_rad![i]) mismatches++;
    expect(mismatches).toBe(0);
    // nothing inside a dropout interval
    expect(d.t.some((t) => (t >= 30 && t < 37.5) || (t >= 100 && t < 100.25))).toBe(false);
    expect(d.t).toContain(29.9);
    expect(d.t).toContain(37.5);
    const temps = d.blocks.flatMap((b) => Array.from(b.channels.temp_C!));
    expect(temps[0]).toBeCloseTo(295 - 273.15, 1);
  });

  it('frames output of the encoder scenario decodes and unwraps back to the true angle; the dropout is a gap', async () => {
    const sc = loadScenario(join(scenarios, 'encoder-fast.json'));
    const s = sink();
    const r = await runSimulator({ scenario: sc, out: s.stream, speed: 0, seed: 9, duration_s: 240 });
    const truth = simulateToArrays(sc, 9, 240);
    expect(r.samples).toBe(240 * 200 - 5 * 200);
    const d = decodeAll({
      station: 'enc', fibre: { name: 'f' },
      input: { format: 'frames', channels: [{ role: 'counts', scale: 1 }] },
      sensor: { kind: 'encoder', counts_per_rev: 10000, counter_bits: 16 },
    }, s.bytes(), 4093);
    expect(d.stats.badRecords).toBe(0);
    expect(d.stats.gaps).toBe(1);
    expect(d.stats.lostFrames).toBe(1000);
    expect(d.t.length).toBe(truth.t.length);
    // the counter wraps many times (swing ≈ ±12 rad ≈ ±19000 counts on a 16-bit counter): unwrapped angle = true angle to one count
    let maxErr = 0, maxDt = 0;
    for (let i = 0; i < d.t.length; i++) {
      maxDt = Math.max(maxDt, Math.abs(d.t[i] - truth.t[i]));
      maxErr = Math.max(maxErr, Math.abs(d.angle[i] - truth.theta[i]));
    }
    expect(maxDt).toBeLessThan(1e-6);
    expect(maxErr).toBeLessThanOrEqual(Math.PI / 10000 + 1e-12);
    expect(d.t.some((t) => t >= 200 && t < 205)).toBe(false);
  });

  it('a lines scenario run as frames decodes with its matching station to the same values within one scale step', async () => {
    const sc = loadScenario(join(scenarios, 'tungsten-bench.json'));
    const s = sink();
    await runSimulator({ scenario: sc, out: s.stream, format: 'frames', speed: 0, seed: 2, duration_s: 60 });
    const truth = simulateToArrays(sc, 2, 60);
    const d = decodeAll(stationForScenario(sc, { format: 'frames' }), s.bytes());
    expect(d.t.length).toBe(300);
    const x = d.blocks.flatMap((b) => Array.from(b.channels.x_m!));
    const temp = d.blocks.flatMap((b) => Array.from(b.channels.temp_C!));
    let ex = 0, et = 0;
    for (let i = 0; i < 300; i++) {
      ex = Math.max(ex, Math.abs(x[i] - truth.channels.x_m![i]));
      et = Math.max(et, Math.abs(temp[i] - truth.channels.temp_C![i]));
    }
    expect(ex).toBeLessThanOrEqual(0.5e-9 + 1e-18);
    expect(et).toBeLessThanOrEqual(0.5e-4 + 1e-12);
  });

  it('the photodiode scenario through its station: saturated samples are flagged, in-range ones give the angle', async () => {
    const sc = loadScenario(join(scenarios, 'photodiode-saturating.json'));
    const s = sink();
    await runSimulator({ scenario: sc, out: s.stream, speed: 0, seed: 5, duration_s: 120 });
    const truth = simulateToArrays(sc, 5, 120);
    const d = decodeAll(stationForScenario(sc), s.bytes());
    expect(d.t[1]).toBeCloseTo(0.1, 12); // t_ms column back in seconds
    let sat = 0, worst = 0;
    for (let i = 0; i < d.t.length; i++) {
      if (d.flags[i] & FLAG_SATURATED) sat++;
      else worst = Math.max(worst, Math.abs(d.angle[i] - truth.theta[i]));
    }
    expect(sat).toBeGreaterThan(200);
    // detector noise of 1e-4 of the beam power, magnified near the saturation mark by the erf slope, stays below a few µrad
    expect(worst).toBeLessThan(5e-6);
  });

  it('the split-photodiode scenario saturates in its first swings and comes into range as the swing decays', () => {
    const sc = loadScenario(join(scenarios, 'photodiode-saturating.json'));
    const r = simulateToArrays(sc, 1, 7000);
    const s = (i: number) => (r.channels.a![i] - r.channels.b![i]) / (r.channels.a![i] + r.channels.b![i]);
    let early = 0, late = 0;
    for (let i = 0; i < 600; i++) if (!(Math.abs(s(i)) < 0.98)) early++;
    for (let i = r.t.length - 600; i < r.t.length; i++) if (!(Math.abs(s(i)) < 0.98)) late++;
    expect(early).toBeGreaterThan(100);
    expect(late).toBe(0);
  });

  it('paces in real time × speed and stops cleanly on abort', async () => {
    const sc = parseScenario({ name: 'pace', duration_s: 3600, sample_rate_Hz: 100, inertia_kg_m2: 1, kappa_Nm_per_rad: 1, q: 10 });
    let writes = 0;
    const counting = new Writable({ write(_c, _e, cb) { writes++; cb(); } });
    const ac = new AbortController();
    const t0 = performance.now();
    setTimeout(() => ac.abort(), 400);
    const r = await runSimulator({ scenario: sc, out: counting, speed: 10, signal: ac.signal });
    const wall = (performance.now() - t0) / 1000;
    // 100 Hz × 10 = 1000 samples per wall second: about 400 by the abort, written in ~50 ms blocks
    expect(r.samples).toBeGreaterThan(100);
    expect(r.samples).toBeLessThan(1000 * wall + 2);
    expect(writes).toBeGreaterThan(3);
    expect(writes).toBeLessThan(r.samples / 10);
  });

  it('honours backpressure: waits for drain on a slow sink and loses nothing', async () => {
    const sc = parseScenario({ name: 'bp', duration_s: 50, sample_rate_Hz: 200, inertia_kg_m2: 1, kappa_Nm_per_rad: 1, q: 10, initial: { amplitude_rad: 0.1 } });
    const got: Buffer[] = [];
    let pending = 0;
    let maxPending = 0;
    const slow = new Writable({
      highWaterMark: 1024,
      write(c, _e, cb) { pending++; maxPending = Math.max(maxPending, pending); got.push(c); setTimeout(() => { pending--; cb(); }, 2); },
    });
    const r = await runSimulator({ scenario: sc, out: slow, speed: Infinity, blockSamples: 256 });
    await new Promise((res) => slow.end(res));
    expect(r.samples).toBe(10000);
    const text = Buffer.concat(got).toString('utf8');
    expect(text.trim().split('\n').filter((l) => !l.startsWith('#')).length).toBe(10000);
    expect(maxPending).toBe(1);
  });

  it('writes to a file path it opens itself and closes it', async () => {
    const sc = parseScenario({ name: 'file', duration_s: 5, sample_rate_Hz: 10, inertia_kg_m2: 1, kappa_Nm_per_rad: 1, q: 10 });
    const p = join(tmp, 'out.txt');
    const r = await runSimulator({ scenario: sc, out: p, speed: 0 });
    const text = readFileSync(p, 'utf8');
    expect(text.length).toBe(r.bytes);
    expect(text.split('\n')[1]).toBe('# columns: t_s,angle_rad');
  });

  it('drives a real pseudo-terminal: the other end of a socat pair reads the frames', async () => {
    const a = join(tmp, 'ptyA');
    const b = join(tmp, 'ptyB');
    const socat: ChildProcess = spawn('socat', [`pty,raw,echo=0,link=${a}`, `pty,raw,echo=0,link=${b}`], { stdio: 'ignore' });
    try {
      for (let i = 0; i < 100 && !(existsSync(a) && existsSync(b)); i++) await new Promise((r) => setTimeout(r, 50));
      expect(existsSync(a) && existsSync(b)).toBe(true);
      const port = new SerialPort({ path: b, baudRate: 115200 });
      await new Promise<void>((res, rej) => port.on('open', res).on('error', rej));
      const chunks: Buffer[] = [];
      port.on('data', (c: Buffer) => chunks.push(c));
      // the writing end runs in its own process (docs/dependencies.md: socat ptys, drive the writer from another process)
      const code = `import { runSimulator } from './drivers/simulator/run-simulator.ts';
import { loadScenario } from './drivers/simulator/scenario.ts';
const sc = loadScenario(${JSON.stringify(join(scenarios, 'encoder-fast.json'))});
const r = await runSimulator({ scenario: sc, out: ${JSON.stringify(a)}, speed: 0, seed: 4, duration_s: 20 });
process.stderr.write(JSON.stringify(r));`;
      const child = spawn(process.execPath, ['--import', 'tsx', '--input-type=module', '-e', code], { cwd: new URL('../../', import.meta.url).pathname, stdio: ['ignore', 'ignore', 'pipe'] });
      let err = '';
      child.stderr!.on('data', (c) => { err += c; });
      const exit = await new Promise<number | null>((res) => child.on('exit', res));
      expect(exit, err).toBe(0);
      const { samples, bytes } = JSON.parse(err);
      expect(samples).toBe(4000);
      for (let i = 0; i < 100 && Buffer.concat(chunks).length < bytes; i++) await new Promise((r) => setTimeout(r, 50));
      await new Promise<void>((res) => port.close(() => res()));
      const d = decodeAll({
        station: 'enc', fibre: { name: 'f' },
        input: { format: 'frames', channels: [{ role: 'counts', scale: 1 }] },
        sensor: { kind: 'encoder', counts_per_rev: 10000, counter_bits: 16 },
      }, Buffer.concat(chunks));
      expect(d.stats.badRecords).toBe(0);
      expect(d.t.length).toBe(4000);
      const truth = simulateToArrays(loadScenario(join(scenarios, 'encoder-fast.json')), 4, 20);
      expect(Math.abs(d.angle[3999] - truth.theta[3999])).toBeLessThanOrEqual(Math.PI / 10000 + 1e-12);
    } finally {
      socat.kill('SIGTERM');
    }
  });

  it('stops cleanly on SIGINT: the process exits 0 with whole lines written', async () => {
    const code = `import { runSimulator } from './drivers/simulator/run-simulator.ts';
import { parseScenario } from './drivers/simulator/scenario.ts';
import { abortOnSignals } from './drivers/simulator/abort-on-signals.ts';
const sc = parseScenario({ name: 'sig', duration_s: 3600, sample_rate_Hz: 50, inertia_kg_m2: 1, kappa_Nm_per_rad: 1, q: 10, initial: { amplitude_rad: 0.1 } });
const { signal, dispose } = abortOnSignals();
process.stderr.write('ready\\n');
const r = await runSimulator({ scenario: sc, out: '-', speed: 1, signal });
dispose();
process.stderr.write(JSON.stringify(r));`;
    const child = spawn(process.execPath, ['--import', 'tsx', '--input-type=module', '-e', code], { cwd: new URL('../../', import.meta.url).pathname, stdio: ['ignore', 'pipe', 'pipe'] });
    let out = '';
    let err = '';
    child.stdout!.on('data', (c) => { out += c; });
    child.stderr!.on('data', (c) => {
      err += c;
      if (err.startsWith('ready')) setTimeout(() => child.kill('SIGINT'), 600);
    });
    const exit = await new Promise<number | null>((res) => child.on('exit', res));
    expect(exit, err).toBe(0);
    const r = JSON.parse(err.slice(err.indexOf('{')));
    const lines = out.split('\n');
    expect(lines.pop()).toBe(''); // ends on a whole line
    expect(lines.filter((l) => !l.startsWith('#')).length).toBe(r.samples);
    expect(r.samples).toBeGreaterThan(5);
    expect(r.samples).toBeLessThan(50 * 30);
  });
});
