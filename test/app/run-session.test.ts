// The run session on a real SQLite file: the recorder's heartbeat, one gap per outage carrying
// the samples it cost, the hole after a crashed run, and closing after the store failed.
import { afterEach, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync } from 'node:fs';
import { hostname, tmpdir } from 'node:os';
import { join } from 'node:path';
import type Database from 'better-sqlite3';
import { openStore } from '../../db/open.js';
import { getRun, openRuns } from '../../db/runs.js';
import { listEvents } from '../../db/events-store.js';
import { parseStation } from '../../src/config/station.js';
import { RunSession } from '../../src/app/run-session.js';
import { recorderAlive, HEARTBEAT_STALE_MS } from '../../src/app/recorder-liveness.js';
import type { AngleBlock } from '../../src/domain/block.js';

const dirs: string[] = [];
afterEach(() => {
  for (const d of dirs.splice(0)) rmSync(d, { recursive: true, force: true });
});

function store(): Database.Database {
  const d = mkdtempSync(join(tmpdir(), 'fw-app-'));
  dirs.push(d);
  return openStore(join(d, 'store.db'));
}

const station = parseStation({ station: 'app-bench', fibre: { name: 'app-fibre' }, input: { format: 'lines', columns: ['t_s', 'angle_rad'] } });

/** n samples at `dt` from device time t0. */
function block(t0: number, n: number, dt = 0.01, host_ms = Date.now()): AngleBlock {
  const t = Float64Array.from({ length: n }, (_, i) => t0 + i * dt);
  return { n, t, clock: 'device', host_ms, angle: new Float64Array(n), flags: new Uint8Array(n), channels: {} };
}

describe('RunSession', () => {
  it('stores its recorder and keeps the heartbeat fresh with the commits', () => {
    const db = store();
    const s = new RunSession(db, station, { source: 'device' });
    const [r] = openRuns(db, 'app-bench');
    expect(r).toMatchObject({ id: s.runId, pid: process.pid, host: hostname(), source: 'device' });
    expect(recorderAlive(r, Date.now())).toBe(true);
    expect(recorderAlive(r, Date.now() + HEARTBEAT_STALE_MS + 1)).toBe(false); // stale: taken as crashed
    const later = Date.now() + 5000;
    s.flushIfDue(later);
    expect(openRuns(db, 'app-bench')[0].heartbeat_ms).toBe(later);
    s.close();
    expect(openRuns(db, 'app-bench')).toEqual([]);
    // the time base is kept: device clock and its reading at t_s = 0
    const s2 = new RunSession(db, station, { source: 'device' });
    s2.ingest(block(1234.5, 10));
    s2.close();
    expect(getRun(db, s2.runId)!.clock).toBe('device');
  });

  it('one outage, one gap: the transport gap takes the samples lost from the sample times', () => {
    const db = store();
    const s = new RunSession(db, station, { source: 'device' });
    const h0 = Date.now();
    s.ingest(block(0, 100, 0.01, h0));
    s.incident({ kind: 'gap', severity: 'warning', host_ms: h0 + 1000, message: 'device away', value: 1.5, data: { duration_s: 1.5, path: '/dev/x', open: false } });
    s.ingest(block(2.5, 100, 0.01, h0 + 2500));
    // the pipeline's report of the same hole, in run time
    s.incident({ kind: 'gap', severity: 'warning', t: 0.99, message: 'sample times jump', value: 1.51, data: { duration_s: 1.51, from: 'sample-times', lost_samples: 150 }, runTime: true } as never);
    s.close();
    const gaps = listEvents(db, s.runId).filter((e) => e.kind === 'gap');
    expect(gaps).toHaveLength(1);
    expect(gaps[0].data).toMatchObject({ path: '/dev/x', lost_samples: 150, sample_gap_s: 1.51 });
  });

  it('after a crashed run on the same device clock, begins with a gap for the hole between them', () => {
    const db = store();
    const s = new RunSession(db, station, { source: 'device', previous: { run: 7, lastDevice_s: 10 } });
    s.ingest(block(12.01, 50, 0.01));
    s.close();
    const [g] = listEvents(db, s.runId).filter((e) => e.kind === 'gap');
    expect(g.t_s).toBe(0);
    expect(g.value).toBeCloseTo(2.01, 9);
    expect(g.data).toMatchObject({ from: 'previous-run', previous_run: 7, lost_samples: 200 });
    // a device clock that restarted says nothing about the hole
    const s2 = new RunSession(db, station, { source: 'device', previous: { run: 7, lastDevice_s: 10 } });
    s2.ingest(block(0, 50));
    s2.close();
    expect(listEvents(db, s2.runId).filter((e) => e.kind === 'gap')).toEqual([]);
  });

  it('after a store fault, closes the run as interrupted with an event saying how many samples were lost', () => {
    const db = store();
    const s = new RunSession(db, station, { source: 'device' });
    s.ingest(block(0, 100));
    s.flush();
    s.ingest(block(1, 40));
    // the store refuses the next commit (as a full disk would): drop the chunk table's insert by a trigger
    db.exec("CREATE TEMP TRIGGER refuse BEFORE UPDATE ON sample_chunks BEGIN SELECT RAISE(ABORT, 'database or disk is full'); END");
    db.exec("CREATE TEMP TRIGGER refuse2 BEFORE INSERT ON sample_chunks BEGIN SELECT RAISE(ABORT, 'database or disk is full'); END");
    const r = s.closeAfterFault({ kind: 'store-full', severity: 'alarm', message: 'the store is full' });
    expect(r).toEqual({ samplesStored: 100, samplesLost: 40, eventStored: true, closed: true });
    const run = getRun(db, s.runId)!;
    expect(run.status).toBe('interrupted');
    const e = listEvents(db, s.runId).find((x) => x.kind === 'store-full')!;
    expect(e.data).toMatchObject({ samples_lost: 40 });
    expect(e.t_s).toBeCloseTo(0.99, 9); // at the last stored sample
  });
});
