import { afterEach, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Database } from 'better-sqlite3';
import { openStore } from '../../db/open.js';
import { createRun, endRun, getRun, listRuns, markInterrupted, parseDateArg, updateRunStartedAt } from '../../db/runs.js';
import { SampleWriter } from '../../db/sample-writer.js';
import { insertEvents, listEvents } from '../../db/events-store.js';

const dirs: string[] = [];
function tmpFile(): string {
  const d = mkdtempSync(join(tmpdir(), 'fw-db-'));
  dirs.push(d);
  return join(d, 'store.db');
}
afterEach(() => {
  for (const d of dirs.splice(0)) rmSync(d, { recursive: true, force: true });
});

const H = 3_600_000;
const D0 = Date.UTC(2026, 2, 10); // 2026-03-10T00:00Z

/** Four runs: A (bench-a/F1) day 10 00–06h, B (bench-b/F2) day 10 06–12h, C (bench-a/F1) day 11 00h still recording, D (bench-a/F2) day 9. */
function fill(db: Database): { a: number; b: number; c: number; d: number } {
  const mk = (station: string, fibre: string, start: number, end: number | null) => {
    const id = createRun(db, { station, fibre: { name: fibre, material: 'tungsten', diameter_m: 2.5e-5, length_m: 0.8 }, startedAt_ms: start, source: 'device', clock: 'device' });
    if (end !== null) endRun(db, id, 'complete', end);
    return id;
  };
  return {
    a: mk('bench-a', 'F1', D0, D0 + 6 * H),
    b: mk('bench-b', 'F2', D0 + 6 * H, D0 + 12 * H),
    c: mk('bench-a', 'F1', D0 + 24 * H, null),
    d: mk('bench-a', 'F2', D0 - 24 * H, D0 - 20 * H),
  };
}

describe('runs', () => {
  it('creates stations and fibres once and lists runs in the runs --json shape', () => {
    const db = openStore(tmpFile());
    const { a, b, c, d } = fill(db);
    expect(db.prepare('SELECT COUNT(*) AS n FROM stations').get()).toEqual({ n: 2 });
    expect(db.prepare('SELECT COUNT(*) AS n FROM fibres').get()).toEqual({ n: 2 });
    const all = listRuns(db, { now_ms: D0 + 30 * H });
    expect(all.map((r) => r.run)).toEqual([d, a, b, c]);
    expect(all[1]).toEqual({
      run: a, station: 'bench-a', fibre: 'F1', started_at: '2026-03-10T00:00:00.000Z', ended_at: '2026-03-10T06:00:00.000Z',
      samples: 0, status: 'complete', source: 'device', gaps: 0, windows: 0,
      uid: expect.stringMatching(/^[0-9a-f]{8}-[0-9a-f]{4}-4[0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}$/), station_run: a,
    });
    // every run its own uid
    expect(new Set(all.map((r) => r.uid)).size).toBe(all.length);
    expect(all[3].ended_at).toBeNull();
    expect(all[3].status).toBe('recording');
    db.close();
  });

  it('filters by fibre, station and the overlap of [since, until)', () => {
    const db = openStore(tmpFile());
    const { a, b, c, d } = fill(db);
    const ids = (f: Parameters<typeof listRuns>[1]) => listRuns(db, { now_ms: D0 + 30 * H, ...f }).map((r) => r.run);
    expect(ids({ fibre: 'F1' })).toEqual([a, c]);
    expect(ids({ station: 'bench-a' })).toEqual([d, a, c]);
    expect(ids({ station: 'bench-a', fibre: 'F2' })).toEqual([d]);
    expect(ids({ fibre: 'nothing' })).toEqual([]);
    // the 10th: A and B lie inside; D ended the day before; C starts on the 11th
    expect(ids({ since_ms: D0, until_ms: D0 + 24 * H })).toEqual([a, b]);
    // until is exclusive: a run starting exactly at until is out
    expect(ids({ since_ms: D0 - 48 * H, until_ms: D0 + 6 * H })).toEqual([d, a]);
    expect(ids({ since_ms: D0 - 48 * H, until_ms: D0 + 6 * H + 1 })).toEqual([d, a, b]);
    // since is inclusive: a run that ends exactly at since still overlaps
    expect(ids({ since_ms: D0 + 12 * H, until_ms: D0 + 13 * H })).toEqual([b]);
    expect(ids({ since_ms: D0 + 12 * H + 1, until_ms: D0 + 13 * H })).toEqual([]);
    // a run still recording spans to now
    expect(ids({ since_ms: D0 + 29 * H })).toEqual([c]);
    expect(listRuns(db, { since_ms: D0 + 29 * H, now_ms: D0 + 28 * H }).map((r) => r.run)).toEqual([]);
    // a span that holds a run entirely, and one that lies inside a run
    expect(ids({ since_ms: D0 + 1 * H, until_ms: D0 + 2 * H })).toEqual([a]);
    db.close();
  });

  it('getRun returns everything stored; endRun validates', () => {
    const db = openStore(tmpFile());
    const id = createRun(db, {
      station: 'bench-a', stationConfig: { station: 'bench-a', sensor: { kind: 'angle' } },
      fibre: { name: 'W25-03', material: 'tungsten', diameter_m: 2.5e-5, length_m: 0.8 },
      startedAt_ms: D0, source: 'file', sourcePath: '/data/rec.csv', clock: 'device', meta: { note: 'x' },
    });
    const r = getRun(db, id)!;
    expect(r).toMatchObject({
      run: id, station: 'bench-a', fibre: 'W25-03', started_at_ms: D0, ended_at_ms: null, status: 'recording',
      source: 'file', source_path: '/data/rec.csv', clock: 'device', meta: { note: 'x' }, events: 0, windows: 0,
      station_config: { station: 'bench-a', sensor: { kind: 'angle' } },
      fibre_info: { name: 'W25-03', material: 'tungsten', diameter_m: 2.5e-5, length_m: 0.8, width_m: null, thickness_m: null },
    });
    expect(getRun(db, id + 1)).toBeUndefined();
    expect(() => endRun(db, id + 1, 'complete', D0)).toThrow(/run \d+ does not exist/);
    expect(() => endRun(db, id, 'recording' as never, D0)).toThrow(/status/);
    // a later run with less fibre detail keeps what is known
    createRun(db, { station: 'bench-a', fibre: { name: 'W25-03' }, startedAt_ms: D0 + H, source: 'device' });
    expect(getRun(db, id)!.fibre_info.diameter_m).toBe(2.5e-5);
    db.close();
  });

  it('markInterrupted ends runs left recording at their last sample or event', () => {
    const db = openStore(tmpFile());
    const { a, c } = fill(db);
    const e = createRun(db, { station: 'bench-b', fibre: { name: 'F2' }, startedAt_ms: D0 + 40 * H, source: 'device' });
    const f = createRun(db, { station: 'bench-b', fibre: { name: 'F2' }, startedAt_ms: D0 + 50 * H, source: 'device' });
    const w = new SampleWriter(db, c);
    w.append(Float64Array.from({ length: 100 }, (_, i) => i * 0.5), { angle: new Float64Array(100) });
    w.flush(); // last sample at 49.5 s
    insertEvents(db, c, [{ t_s: 10, t_ms: D0 + 24 * H + 10_000, kind: 'gap', severity: 'warning', message: 'gap' }]);
    insertEvents(db, e, [{ t_s: 120, t_ms: D0 + 40 * H + 120_000, kind: 'reconnect', severity: 'info', message: 'back' }]);
    expect(markInterrupted(db, 'bench-a')).toEqual([c]);
    expect(getRun(db, c)!).toMatchObject({ status: 'interrupted', ended_at_ms: D0 + 24 * H + 49_500 });
    expect(markInterrupted(db)).toEqual([e, f]);
    expect(getRun(db, e)!.ended_at_ms).toBe(D0 + 40 * H + 120_000);
    expect(getRun(db, f)!.ended_at_ms).toBe(D0 + 50 * H); // nothing stored: ends where it started
    expect(getRun(db, a)!.status).toBe('complete');
    expect(markInterrupted(db)).toEqual([]);
    db.close();
  });

  it('updateRunStartedAt moves the UTC stamps of the run and its events', () => {
    const db = openStore(tmpFile());
    const id = createRun(db, { station: 's', fibre: { name: 'f' }, startedAt_ms: D0, source: 'file' });
    insertEvents(db, id, [{ t_s: 5, t_ms: D0 + 5000, kind: 'gap', severity: 'info', message: 'g' }]);
    endRun(db, id, 'complete', D0 + 60_000);
    updateRunStartedAt(db, id, D0 - H);
    const r = getRun(db, id)!;
    expect([r.started_at_ms, r.ended_at_ms]).toEqual([D0 - H, D0 - H + 60_000]);
    expect(listEvents(db, id)[0]).toMatchObject({ t_s: 5, t: new Date(D0 - H + 5000).toISOString() });
    expect(() => updateRunStartedAt(db, id + 5, D0)).toThrow(/does not exist/);
    db.close();
  });
});

describe('parseDateArg', () => {
  it('accepts YYYY-MM-DD as UTC midnight and ISO 8601 date-times', () => {
    expect(parseDateArg('2026-03-10')).toBe(D0);
    expect(parseDateArg('2026-03-10T06:30:00Z')).toBe(D0 + 6.5 * H);
    expect(parseDateArg('2026-03-10T06:30Z')).toBe(D0 + 6.5 * H);
    expect(parseDateArg('2026-03-10T06:30:00.250Z')).toBe(D0 + 6.5 * H + 250);
    expect(parseDateArg('2026-03-10T08:30:00+02:00')).toBe(D0 + 6.5 * H);
    expect(parseDateArg('2026-03-10T01:00:00-0530')).toBe(D0 + 6.5 * H);
    expect(parseDateArg('2026-03-10T06:30:00')).toBe(D0 + 6.5 * H); // no offset: UTC
    // the same instants as JavaScript's own ISO parser gives them
    for (const s of ['2024-02-29T23:59:59.999Z', '1999-12-31T23:00:00+01:00']) expect(parseDateArg(s)).toBe(Date.parse(s));
  });

  it('refuses anything else, naming the value', () => {
    for (const s of ['yesterday', '2026-13-01', '2026-02-30', '2026-03-10T25:00Z', '10/03/2026', '', '2026-03-10T06:30+25:00']) {
      expect(() => parseDateArg(s), s).toThrow(new RegExp(`"${s.replace(/[+.]/g, '\\$&')}" is not a date`));
    }
  });
});
