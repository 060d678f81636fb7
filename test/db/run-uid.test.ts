/**
 * Run uids: a new run gets a random (version 4) UUID; runs stored before
 * schema 6 get a name-based (version 5) one when the store is upgraded, the
 * same whichever copy of the store is upgraded — in place, or in memory as a
 * read-only store is — so a sync never sees one run under two names.
 */
import { afterEach, describe, expect, it } from 'vitest';
import Database from 'better-sqlite3';
import { copyFileSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { migrate } from '../../db/migrations.js';
import { openStore } from '../../db/open.js';
import { createRun, listRuns } from '../../db/runs.js';

const dirs: string[] = [];
function tmpDir(): string {
  const d = mkdtempSync(join(tmpdir(), 'fw-uid-'));
  dirs.push(d);
  return d;
}
afterEach(() => {
  for (const d of dirs.splice(0)) rmSync(d, { recursive: true, force: true });
});

const V4 = /^[0-9a-f]{8}-[0-9a-f]{4}-4[0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}$/;
const V5 = /^[0-9a-f]{8}-[0-9a-f]{4}-5[0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}$/;

/** A store at schema 5 (before uids) with three runs, as an older fibrewatch left it. */
function schema5Store(path: string): void {
  const db = new Database(path);
  migrate(db, 5);
  db.exec(`
    INSERT INTO stations (name, updated_at) VALUES ('bench-a', 0), ('bench-b', 0);
    INSERT INTO fibres (name) VALUES ('F1');
    INSERT INTO runs (station_id, fibre_id, started_at_ms, status, source, source_path) VALUES
      (1, 1, 1772323200000, 'complete', 'device', '/dev/ttyACM0'),
      (1, 1, 1772409600000, 'complete', 'file', 'week-12.csv'),
      (2, 1, 1772323200000, 'complete', 'device', '/dev/ttyACM0');`);
  db.close();
}

describe('run uids', () => {
  it('a new run gets a fresh random uid', () => {
    const db = openStore(join(tmpDir(), 'new.db'));
    const mk = () => createRun(db, { station: 's', fibre: { name: 'F' }, startedAt_ms: 0, source: 'file' });
    mk();
    mk();
    const uids = listRuns(db).map((r) => r.uid);
    db.close();
    expect(uids).toHaveLength(2);
    for (const u of uids) expect(u).toMatch(V4);
    expect(uids[0]).not.toBe(uids[1]);
  });

  it('runs from before uids get the same name-based uid whichever copy of the store is upgraded', () => {
    const d = tmpDir();
    const a = join(d, 'a.db');
    schema5Store(a);
    const b = join(d, 'b.db');
    copyFileSync(a, b);
    // the bytes of the old store, upgraded in memory as a read-only store is (db/open.ts readCopy)
    const bytes = readFileSync(a);

    const uidsOf = (path: string) => {
      const db = openStore(path);
      try {
        return listRuns(db).map((r) => [r.station_run, r.uid] as const);
      } finally {
        db.close();
      }
    };
    const inMemory = () => {
      const db = new Database(bytes);
      try {
        migrate(db);
        return listRuns(db).map((r) => [r.station_run, r.uid] as const);
      } finally {
        db.close();
      }
    };
    const first = uidsOf(a);
    expect(first.map(([, u]) => u).every((u) => V5.test(u))).toBe(true);
    expect(new Set(first.map(([, u]) => u)).size).toBe(3);
    expect(uidsOf(b)).toEqual(first);
    expect(inMemory()).toEqual(first);
    expect(inMemory()).toEqual(first);
  });
});
