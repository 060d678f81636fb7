/**
 * `record` under a producer faster than a person would ever watch: binary
 * frames at 8 kHz from the simulator over a real pseudo-terminal for about
 * 12 s of wall time. Every frame written is stored, and the recording
 * process's resident memory stays flat (sampled from /proc/PID/status).
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import { parseScenario } from '../../drivers/simulator/scenario.js';
import { stationForScenario } from '../helpers/station-for-scenario.js';
import { startPtyPair, waitFor, type PtyPair } from '../../drivers/pty-pair.js';
import { startCli } from '../helpers/cli.js';
import { samplesIn } from '../helpers/store.js';

const RATE_Hz = 8000;
const DURATION_S = 12;
// invented fast balance: T ≈ 1 s, angle frames (1 nrad per count) at 8 kHz
const SCENARIO = {
  name: 'fast-frames',
  duration_s: DURATION_S,
  sample_rate_Hz: RATE_Hz,
  inertia_kg_m2: 1e-4,
  kappa_Nm_per_rad: 4e-3,
  q: 500,
  thermal_noise: false,
  angle_noise_rad: 1e-6,
  initial: { amplitude_rad: 1e-2, phase_rad: 0, equilibrium_rad: 0 },
  sensor: { kind: 'angle' },
  output: { format: 'frames', channels: [{ role: 'angle_rad', scale: 1e-9 }] },
};

let dir: string;
let pty: PtyPair | undefined;

beforeEach(() => {
  dir = mkdtempSync(join(tmpdir(), 'fw-rec-fast-'));
});
afterEach(async () => {
  await pty?.stop();
  pty = undefined;
  rmSync(dir, { recursive: true, force: true });
});

/** Resident set size of a process, bytes (VmRSS in /proc/PID/status, Linux). */
function rssOf(pid: number): number | undefined {
  try {
    const m = /VmRSS:\s+(\d+)\s+kB/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
    return m ? Number(m[1]) * 1024 : undefined;
  } catch {
    return undefined;
  }
}

describe('record under a fast producer', () => {
  it('stores every frame of an 8 kHz stream and keeps its memory flat', async () => {
    const sc = parseScenario(SCENARIO);
    const scenarioPath = join(dir, 'scenario.json');
    writeFileSync(scenarioPath, JSON.stringify(SCENARIO));
    pty = await startPtyPair(dir);
    const stationPath = join(dir, 'station.json');
    writeFileSync(stationPath, JSON.stringify(stationForScenario(sc, { name: 'fast-bench', device: pty.devicePath })));
    const db = join(dir, 'store.db');

    const rec = startCli(['record', '--station', stationPath, '--db', db]);
    await rec.waitForStderr('recording run');
    const rss: { t: number; v: number }[] = [];
    const t0 = Date.now();
    const sampler = setInterval(() => {
      const v = rssOf(rec.child.pid!);
      if (v !== undefined) rss.push({ t: Date.now() - t0, v });
    }, 200);
    const sim = startCli(['simulate', '--scenario', scenarioPath, '--device', pty.feedPath, '--speed', '1', '--seed', '3']);
    expect((await sim.exited).code, sim.stderr()).toBe(0);
    const written = Number(/wrote (\d+) samples/.exec(sim.stderr())?.[1]);
    expect(written).toBe(RATE_Hz * DURATION_S);
    await waitFor(() => samplesIn(db) >= written, 'every frame committed', 20_000, 100);
    clearInterval(sampler);
    rec.child.kill('SIGTERM');
    expect((await rec.exited).code, rec.stderr()).toBe(0);
    // no frame lost: the stored count equals the count written, and no CRC or sequence trouble was logged as lost data
    expect(samplesIn(db)).toBe(written);
    const d = new Database(db, { readonly: true });
    const gaps = (d.prepare("SELECT COUNT(*) AS n FROM events WHERE kind IN ('gap', 'bad-input')").get() as { n: number }).n;
    // the analysis kept up too: 12 s of a 1 s swing in 4-period windows stepping 1 period
    const windows = (d.prepare("SELECT COUNT(*) AS n FROM windows WHERE status = 'ok'").get() as { n: number }).n;
    d.close();
    expect(gaps).toBe(0);
    expect(windows).toBeGreaterThanOrEqual(5);

    // memory: the second half of the run holds no more than the first half (+20 %), and stays modest
    expect(rss.length).toBeGreaterThan(20);
    const half = rss[rss.length - 1].t / 2;
    const max = (xs: { v: number }[]) => Math.max(...xs.map((x) => x.v));
    const first = max(rss.filter((x) => x.t <= half));
    const second = max(rss.filter((x) => x.t > half));
    expect(second, `RSS first half ${first}, second half ${second}`).toBeLessThan(1.2 * first);
    expect(second).toBeLessThan(250e6);
  }, 60_000);
});
