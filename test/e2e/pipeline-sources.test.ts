/**
 * One pipeline, three sources: the same bytes through `fibrewatch import`
 * (file replay), through `fibrewatch record` on a real socat pseudo-terminal
 * (live device) and through the in-process acquisition path fed in odd chunk
 * sizes (as the simulator and demo use it) give the same stored windows.
 * Importing the same file twice gives identical results too.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseScenario } from '../../drivers/simulator/scenario.js';
import { runSimulator } from '../../drivers/simulator/run-simulator.js';
import { stationForScenario } from '../helpers/station-for-scenario.js';
import { openStore } from '../../db/open.js';
import { parseStation, type Station } from '../../src/config/station.js';
import { RunSession } from '../../src/app/run-session.js';
import { Acquisition } from '../../src/app/acquisition.js';
import { makeLiveSink } from '../../src/app/live-sink.js';
import { startPtyPair, waitFor, type PtyPair } from '../../drivers/pty-pair.js';
import { spawn } from 'node:child_process';
import { runCli, startCli } from '../helpers/cli.js';
import { samplesIn } from '../helpers/store.js';

// an invented balance: 0.1 mm tungsten, ~40 s period, 50 min at 10 Hz, thermal and readout noise
const SCENARIO = {
  name: 'sources-check',
  duration_s: 3000,
  sample_rate_Hz: 10,
  inertia_kg_m2: 4e-5,
  kappa_Nm_per_rad: 1e-6,
  q: 2000,
  temperature_K: 295,
  thermal_noise: true,
  angle_noise_rad: 3e-7,
  initial: { amplitude_rad: 2e-3, phase_rad: 0.3, equilibrium_rad: 1e-4 },
  sensor: { kind: 'angle' },
  output: { format: 'lines', columns: ['t_s', 'angle_rad'] },
};

let dir: string;
let file: string;
let stationPath: string;
let station: Station;
let pty: PtyPair | undefined;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'fw-sources-'));
  const sc = parseScenario(SCENARIO);
  file = join(dir, 'rec.csv');
  await runSimulator({ scenario: sc, out: file, speed: 0, seed: 11 });
  // the station a user would write: no period guess, so the decimation factor comes from the first FFT estimate
  const s = stationForScenario(sc, { name: 'sources-bench' }) as unknown as Record<string, unknown>;
  const { period_guess_s: _drop, ...analysis } = s.analysis as Record<string, unknown>;
  const json = { ...s, analysis: { ...analysis, window_periods: 4, step_periods: 1 } };
  stationPath = join(dir, 'station.json');
  writeFileSync(stationPath, JSON.stringify(json));
  station = parseStation(json);
});
afterAll(async () => {
  await pty?.stop();
  rmSync(dir, { recursive: true, force: true });
});

type Row = Record<string, unknown>;

function windowsOf(db: string, run: number): Row[] {
  const r = runCli(['windows', String(run), '--db', db, '--json']);
  expect(r.status, r.stderr).toBe(0);
  // t_mid is the ISO form of started_at + t_mid_s: the start differs between a live run and an import
  return (JSON.parse(r.stdout) as Row[]).map(({ t_mid: _t, ...rest }) => rest);
}

function importRun(db: string): number {
  const r = runCli(['import', file, '--station', stationPath, '--db', db, '--started-at', '2026-03-01T00:00:00Z', '--json']);
  expect(r.status, r.stderr).toBe(0);
  return (JSON.parse(r.stdout) as { run: number }).run;
}

/** Field-by-field equality: numbers to 1e-12 relative, everything else exactly. */
function expectSameWindows(a: Row[], b: Row[], what: string): void {
  expect(b.length, `${what}: window count`).toBe(a.length);
  for (let i = 0; i < a.length; i++) {
    expect(Object.keys(b[i]).sort(), `${what}: fields of window ${i}`).toEqual(Object.keys(a[i]).sort());
    for (const k of Object.keys(a[i])) {
      const x = a[i][k], y = b[i][k];
      if (typeof x === 'number' && typeof y === 'number') {
        const tol = 1e-12 * Math.max(Math.abs(x), Math.abs(y)) + 1e-300;
        expect(Math.abs(x - y) <= tol, `${what}: window ${i} ${k}: ${x} vs ${y}`).toBe(true);
      } else {
        expect(y, `${what}: window ${i} ${k}`).toEqual(x);
      }
    }
  }
}

/** Copy a file's bytes into the pty's feed end from another process (writing from this one could deadlock). */
function copyInto(src: string, feed: string): Promise<number | null> {
  const script = 'const fs=require("fs");fs.createReadStream(process.argv[1]).pipe(fs.createWriteStream(process.argv[2])).on("finish",()=>process.exit(0));';
  const child = spawn(process.execPath, ['-e', script, src, feed], { stdio: 'ignore' });
  return new Promise((resolve) => child.once('exit', (code) => resolve(code)));
}

describe('one pipeline, three sources', () => {
  let reference: Row[];
  let lines: number;

  it('import of the same bytes twice gives identical windows', () => {
    const db = join(dir, 'import.db');
    const a = windowsOf(db, importRun(db));
    const b = windowsOf(db, importRun(db));
    lines = readFileSync(file, 'utf8').split('\n').filter((l) => l && !l.startsWith('#')).length;
    expect(lines).toBe(30_000);
    // 50 min of a ~40 s swing in 4-period windows stepping 1 period: about 70 windows, nearly all fitted
    expect(a.length).toBeGreaterThan(60);
    expect(a.filter((w) => w.status === 'ok').length).toBeGreaterThan(0.9 * a.length);
    expectSameWindows(a, b, 'import twice');
    reference = a;
  });

  it('the in-process acquisition path, fed in odd chunk sizes, gives the same windows', async () => {
    const dbPath = join(dir, 'inproc.db');
    const db = openStore(dbPath);
    const bytes = readFileSync(file);
    const session = new RunSession(db, station, { source: 'simulator', startedAt_ms: Date.parse('2026-03-01T00:00:00Z') });
    const acq = new Acquisition(station, session, makeLiveSink(station, session, { live: false, log: () => {} }));
    const sizes = [1, 997, 13, 4093, 65_537, 7];
    let host = Date.parse('2026-03-01T00:00:00Z');
    for (let at = 0, k = 0; at < bytes.length; k++) {
      const n = sizes[k % sizes.length];
      acq.bytes(bytes.subarray(at, at + n), (host += 3));
      at += n;
    }
    await acq.end();
    session.close('complete');
    const run = session.runId;
    db.close();
    expectSameWindows(reference, windowsOf(dbPath, run), 'in-process vs import');
  });

  it('record from a pseudo-terminal fed the same bytes gives the same windows', async () => {
    pty = await startPtyPair(dir);
    const db = join(dir, 'record.db');
    const st = join(dir, 'station-dev.json');
    writeFileSync(st, JSON.stringify({ ...JSON.parse(readFileSync(stationPath, 'utf8')), input: { ...station.input, device: pty.devicePath } }));
    const rec = startCli(['record', '--station', st, '--db', db]);
    await rec.waitForStderr('recording run');
    // record drops the first line after opening the port as torn: lead with an empty one
    const feed = join(dir, 'feed.bin');
    writeFileSync(feed, Buffer.concat([Buffer.from('\n'), readFileSync(file)]));
    expect(await copyInto(feed, pty.feedPath)).toBe(0);
    await waitFor(() => samplesIn(db) >= lines, 'every sample committed', 30_000, 100);
    rec.child.kill('SIGINT');
    expect((await rec.exited).code, rec.stderr()).toBe(0);
    await pty.stop();
    pty = undefined;
    expect(samplesIn(db)).toBe(lines);
    expectSameWindows(reference, windowsOf(db, 1), 'record vs import');
  }, 60_000);
});
