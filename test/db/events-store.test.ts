import { afterEach, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { openStore } from '../../db/open.js';
import { createRun, getRun } from '../../db/runs.js';
import { countEvents, insertEvents, listEvents } from '../../db/events-store.js';

const dirs: string[] = [];
function tmpFile(): string {
  const d = mkdtempSync(join(tmpdir(), 'fw-db-'));
  dirs.push(d);
  return join(d, 'store.db');
}
afterEach(() => {
  for (const d of dirs.splice(0)) rmSync(d, { recursive: true, force: true });
});

const T0 = Date.UTC(2026, 3, 1, 12);

describe('events', () => {
  it('round-trips in the events --json shape, in time order, and counts gaps on the run', () => {
    const db = openStore(tmpFile());
    const run = createRun(db, { station: 's', fibre: { name: 'f' }, startedAt_ms: T0, source: 'device' });
    insertEvents(db, run, [
      { t_s: 30, t_ms: T0 + 30_000, kind: 'gap', severity: 'warning', message: 'no samples for 4.0 s', data: { duration_s: 4 } },
      { t_s: 12.5, t_ms: T0 + 12_500, kind: 'equilibrium-drift', severity: 'alarm', message: 'equilibrium moving', value: 7.2e-6, threshold: 5e-6, state: 'raised' },
      { t_s: 40, t_ms: T0 + 40_000, kind: 'gap', severity: 'warning', message: 'no samples for 2.0 s', value: NaN },
    ]);
    const ev = listEvents(db, run);
    expect(ev.map((e) => e.t_s)).toEqual([12.5, 30, 40]);
    expect(ev[0]).toEqual({
      t: '2026-04-01T12:00:12.500Z', t_s: 12.5, kind: 'equilibrium-drift', severity: 'alarm', message: 'equilibrium moving',
      value: 7.2e-6, threshold: 5e-6, state: 'raised', data: null,
    });
    expect(ev[1].data).toEqual({ duration_s: 4 });
    expect(ev[2].value).toBeNull(); // NaN is stored as null (JSON has no NaN)
    expect(listEvents(db, run, { kinds: ['gap'] }).map((e) => e.t_s)).toEqual([30, 40]);
    expect(listEvents(db, run, { kinds: ['gap', 'equilibrium-drift'] })).toHaveLength(3);
    expect(countEvents(db, run)).toBe(3);
    expect(countEvents(db, run, 'gap')).toBe(2);
    expect(countEvents(db, run, 'reconnect')).toBe(0);
    expect(getRun(db, run)!.gaps).toBe(2);
    expect(getRun(db, run)!.events).toBe(3);
    db.close();
  });

  it('one bad row stores nothing (one transaction) and names the row', () => {
    const db = openStore(tmpFile());
    const run = createRun(db, { station: 's', fibre: { name: 'f' }, startedAt_ms: T0, source: 'device' });
    expect(() => insertEvents(db, run, [
      { t_s: 1, t_ms: T0 + 1000, kind: 'gap', severity: 'info', message: 'a' },
      { t_s: Infinity, t_ms: T0, kind: 'gap', severity: 'info', message: 'b' },
    ])).toThrow(/rows\[1\]\.t_s/);
    expect(() => insertEvents(db, run + 7, [{ t_s: 1, t_ms: T0, kind: 'gap', severity: 'info', message: 'a' }])).toThrow(/FOREIGN KEY/);
    expect(countEvents(db, run)).toBe(0);
    expect(getRun(db, run)!.gaps).toBe(0);
    db.close();
  });
});
