/**
 * Faults mid-run never cost a sample: the app's data path (RunSession +
 * Acquisition + makeLiveSink) on a real SQLite store, fed the simulator's
 * lines, with a kernel of the pipeline, the window analysis, a watcher and
 * finally the store's window writer each made to throw once. Every fed sample
 * must be stored, windows after the faults stored and fitted, the failed
 * window kept with status `internal-error`, and each fault left as an event.
 */
import { afterAll, afterEach, beforeAll, describe, expect, it, vi } from 'vitest';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import { parseScenario } from '../../drivers/simulator/scenario.js';
import { runSimulator } from '../../drivers/simulator/run-simulator.js';
import { stationForScenario } from '../helpers/station-for-scenario.js';
import { openStore } from '../../db/open.js';
import type { Station } from '../../src/config/station.js';
import { RunSession } from '../../src/app/run-session.js';
import { Acquisition } from '../../src/app/acquisition.js';
import { makeLiveSink } from '../../src/app/live-sink.js';
import { HampelDetector } from '../../src/analysis/hampel.js';
import { FIT_STATUS } from '../../src/analysis/fit-status.js';

// which kernels throw, once each: the window analysis at the first window from `analyseFrom_s`, the
// saturation watcher's alert state on its `saturationAt`-th step
const fault = vi.hoisted(() => ({ analyseFrom_s: Infinity, analyseThrown: false, saturationAt: 0, saturationCalls: 0 }));
vi.mock(import('../../src/analysis/window-analysis.js'), async (importOriginal) => {
  const m = await importOriginal();
  return {
    ...m,
    analyseWindow: (w, o) => {
      if (!fault.analyseThrown && w.t_start_s >= fault.analyseFrom_s) {
        fault.analyseThrown = true;
        throw new Error('injected: the fit blew up');
      }
      return m.analyseWindow(w, o);
    },
  };
});
vi.mock(import('../../pipelines/watch/alert-state.js'), async (importOriginal) => {
  const m = await importOriginal();
  return {
    ...m,
    createAlertState: (o: Parameters<typeof m.createAlertState>[0]) => {
      const sm = m.createAlertState(o);
      return {
        get active() { return sm.active; },
        get raisedAt() { return sm.raisedAt; },
        clearFraction: sm.clearFraction,
        step(ev: Parameters<typeof sm.step>[0]) {
          if (o.kind === 'saturation' && ++fault.saturationCalls === fault.saturationAt) throw new Error('injected: saturation watcher');
          return sm.step(ev);
        },
      };
    },
  };
});

// an invented balance: ~40 s period, 40 min at 10 Hz, thermal and readout noise
const SCENARIO = {
  name: 'faults-check',
  duration_s: 2400,
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
/** the despiker throws at this sample time, run time (the simulator's clock starts at 0) */
const CLEAN_FAULT_S = 1000;
const ANALYSE_FAULT_S = 1600;

let dir: string;
let bytes: Buffer;
let lines: number;
let station: Station;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'fw-faults-'));
  const sc = parseScenario(SCENARIO);
  const file = join(dir, 'rec.csv');
  await runSimulator({ scenario: sc, out: file, speed: 0, seed: 5 });
  bytes = readFileSync(file);
  lines = bytes.toString('utf8').split('\n').filter((l) => l && !l.startsWith('#')).length;
  station = stationForScenario(sc, { name: 'faults-bench' });
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));
afterEach(() => {
  vi.restoreAllMocks();
  Object.assign(fault, { analyseFrom_s: Infinity, analyseThrown: false, saturationAt: 0, saturationCalls: 0 });
});

/** Feed the recording through the app's data path in odd chunks; returns the run number. */
async function record(dbPath: string, log: string[]): Promise<number> {
  const db = openStore(dbPath);
  try {
    const session = new RunSession(db, station, { source: 'simulator', startedAt_ms: Date.parse('2026-04-01T00:00:00Z') });
    const acq = new Acquisition(station, session, makeLiveSink(station, session, { live: false, log: (l) => log.push(l) }));
    const sizes = [4093, 17, 65_537, 1];
    let host = Date.parse('2026-04-01T00:00:00Z');
    for (let at = 0, k = 0; at < bytes.length; k++) {
      const n = sizes[k % sizes.length];
      acq.bytes(bytes.subarray(at, at + n), (host += 3));
      at += n;
    }
    await acq.end();
    session.close('complete');
    return session.runId;
  } finally {
    db.close();
  }
}

interface Stored {
  samples: number;
  status: string;
  windows: { idx: number; t_start_s: number; t_end_s: number; status: string; period_s: number | null }[];
  events: { kind: string; message: string; data: Record<string, unknown> }[];
}

function stored(dbPath: string, run: number): Stored {
  const db = new Database(dbPath, { readonly: true });
  try {
    const r = db.prepare('SELECT samples, status FROM runs WHERE id = ?').get(run) as { samples: number; status: string };
    const windows = db.prepare('SELECT idx, t_start_s, t_end_s, status, period_s FROM windows WHERE run_id = ? ORDER BY idx').all(run) as Stored['windows'];
    const events = (db.prepare('SELECT kind, message, data_json FROM events WHERE run_id = ? ORDER BY t_s').all(run) as { kind: string; message: string; data_json: string | null }[])
      .map((e) => ({ kind: e.kind, message: e.message, data: e.data_json ? (JSON.parse(e.data_json) as Record<string, unknown>) : {} }));
    return { ...r, windows, events };
  } finally {
    db.close();
  }
}

describe('faults during a run', () => {
  let reference: Stored;

  it('without a fault: every sample stored, the windows fitted, no fault event', async () => {
    const dbPath = join(dir, 'plain.db');
    reference = stored(dbPath, await record(dbPath, []));
    expect(lines).toBe(24_000);
    expect(reference.samples).toBe(lines);
    expect(reference.status).toBe('complete');
    // 40 min of a ~40 s swing in 4-period windows stepping 1 period: about 55 windows
    expect(reference.windows.length).toBeGreaterThan(45);
    expect(reference.windows.filter((w) => w.status === 'ok').length).toBeGreaterThan(0.9 * reference.windows.length);
    expect(reference.events.filter((e) => e.kind === 'internal-error' || e.kind === 'watch-error')).toEqual([]);
  });

  it('a throwing despiker, window analysis and watcher: all samples stored, windows after stored and fitted, each fault an event', async () => {
    let pushes = 0;
    const realPush = HampelDetector.prototype.push;
    vi.spyOn(HampelDetector.prototype, 'push').mockImplementation(function (this: HampelDetector, ...a: Parameters<HampelDetector['push']>) {
      if (++pushes === CLEAN_FAULT_S * SCENARIO.sample_rate_Hz + 1) throw new Error('injected: despiker');
      return realPush.apply(this, a);
    });
    fault.analyseFrom_s = ANALYSE_FAULT_S;
    fault.saturationAt = 20; // of about 45 cleaned blocks
    const dbPath = join(dir, 'faults.db');
    const log: string[] = [];
    const s = stored(dbPath, await record(dbPath, log));

    // acquisition and storage never stopped
    expect(s.samples).toBe(lines);
    expect(s.status).toBe('complete');
    // windows after the despiker's fault are stored and fitted; none spans it
    for (const w of s.windows) expect(w.t_start_s < CLEAN_FAULT_S && w.t_end_s > CLEAN_FAULT_S, `window ${w.idx}`).toBe(false);
    const after = s.windows.filter((w) => w.t_start_s > CLEAN_FAULT_S);
    expect(after.length).toBeGreaterThan(0.8 * reference.windows.filter((w) => w.t_start_s > CLEAN_FAULT_S).length);
    expect(s.windows.map((w) => w.idx)).toEqual(s.windows.map((_, i) => i));
    // the window whose analysis threw is stored, unfitted, with status internal-error; the others fitted
    const failed = s.windows.filter((w) => w.status === FIT_STATUS.internalError);
    expect(failed).toHaveLength(1);
    expect(failed[0].t_start_s).toBeGreaterThanOrEqual(ANALYSE_FAULT_S);
    expect(failed[0].period_s).toBeNull();
    expect(after.filter((w) => w.status === 'ok').length).toBeGreaterThan(0.9 * (after.length - 1));
    // one event per fault, each naming where it happened
    const internal = s.events.filter((e) => e.kind === 'internal-error');
    expect(internal.map((e) => e.data.stage).sort()).toEqual(['analyse', 'clean']);
    expect(internal.find((e) => e.data.stage === 'clean')!.message).toMatch(/^clean failed at t = \d+\.\d\d s: injected: despiker; restarted with fresh state/);
    expect(internal.find((e) => e.data.stage === 'analyse')).toMatchObject({ data: { window: failed[0].idx, message: 'injected: the fit blew up' } });
    const watch = s.events.filter((e) => e.kind === 'watch-error');
    expect(watch).toHaveLength(1);
    expect(watch[0].data).toMatchObject({ stage: 'watch-saturation', message: 'injected: saturation watcher' });
    // the restart is no outage: no gap event
    expect(s.events.filter((e) => e.kind === 'gap')).toEqual([]);
    expect(log.filter((l) => /stopped/.test(l))).toEqual([]);
  });

  it('an error escaping the streams (the store refuses a window) is a logged internal-error event, not a crash', async () => {
    let calls = 0;
    const realWindow = RunSession.prototype.window;
    vi.spyOn(RunSession.prototype, 'window').mockImplementation(function (this: RunSession, ...a: Parameters<RunSession['window']>) {
      if (++calls === 10) throw new Error('injected: window store');
      return realWindow.apply(this, a);
    });
    const dbPath = join(dir, 'escaped.db');
    const log: string[] = [];
    const s = stored(dbPath, await record(dbPath, log));
    expect(s.samples).toBe(lines);
    expect(s.status).toBe('complete');
    // that one window is lost, the rest stored as without the fault
    expect(s.windows.length).toBe(reference.windows.length - 1);
    expect(s.windows.map((w) => w.idx)).toEqual(reference.windows.map((w) => w.idx).filter((i) => i !== 9));
    const escaped = s.events.filter((e) => e.kind === 'internal-error');
    expect(escaped).toHaveLength(1);
    expect(escaped[0]).toMatchObject({ data: { stage: 'escaped', message: 'injected: window store' } });
    expect(log).toContain('internal error: an error escaped the pipeline stages: injected: window store');
  });
});
