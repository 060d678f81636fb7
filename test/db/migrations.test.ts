import { afterEach, describe, expect, it } from 'vitest';
import Database from 'better-sqlite3';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { migrate, schemaVersion, SCHEMA_VERSION, MIGRATIONS } from '../../db/migrations.js';
import { openStore } from '../../db/open.js';
import { getRun, listRuns } from '../../db/runs.js';
import { listEvents } from '../../db/events-store.js';
import { readSamples } from '../../db/sample-reader.js';
import { encodeChunk } from '../../db/codec.js';

const dirs: string[] = [];
function tmpFile(): string {
  const d = mkdtempSync(join(tmpdir(), 'fw-db-'));
  dirs.push(d);
  return join(d, 'store.db');
}
afterEach(() => {
  for (const d of dirs.splice(0)) rmSync(d, { recursive: true, force: true });
});

describe('migrations', () => {
  it('a new store is at the latest schema with every table', () => {
    const db = openStore(tmpFile());
    expect(schemaVersion(db)).toBe(SCHEMA_VERSION);
    expect(SCHEMA_VERSION).toBe(MIGRATIONS.length);
    const tables = (db.prepare("SELECT name FROM sqlite_master WHERE type = 'table' ORDER BY name").all() as { name: string }[]).map((r) => r.name);
    expect(tables).toEqual(['archive_sync', 'events', 'fibres', 'runs', 'sample_chunks', 'stations', 'windows']);
    expect(db.pragma('integrity_check', { simple: true })).toBe('ok');
    db.close();
  });

  it('a store made by an older version opens, upgrades and keeps its rows', () => {
    const path = tmpFile();
    // build a version-1 file by running only migration 1, and fill it as v1 code would
    const old = new Database(path);
    old.pragma('journal_mode = WAL');
    expect(migrate(old, 1)).toEqual([1]);
    expect(schemaVersion(old)).toBe(1);
    expect(old.prepare("SELECT COUNT(*) AS n FROM pragma_table_info('runs') WHERE name = 'clock'").get()).toEqual({ n: 0 });
    old.prepare("INSERT INTO stations (name, config_json, updated_at) VALUES ('bench-a', '{}', 0)").run();
    old.prepare("INSERT INTO fibres (name, material, diameter_m, length_m) VALUES ('W25-03', 'tungsten', 2.5e-5, 0.8)").run();
    old.prepare(`INSERT INTO runs (station_id, fibre_id, started_at_ms, ended_at_ms, status, source, samples)
                 VALUES (1, 1, ?, ?, 'complete', 'device', 3)`).run(Date.UTC(2026, 0, 5), Date.UTC(2026, 0, 5, 1));
    const c = encodeChunk(Float64Array.of(0, 0.05, 0.1), Float64Array.of(1e-3, 2e-3, 3e-3), null);
    old.prepare(`INSERT INTO sample_chunks (run_id, channel, seq, t0_s, t1_s, count, time_kind, dt_s, time_blob, value_kind, value_base, value_blob, flags_blob, deflated)
                 VALUES (1, 'angle', 0, @t0_s, @t1_s, @count, @time_kind, @dt_s, @time_blob, @value_kind, @value_base, @value_blob, @flags_blob, @deflated)`).run(c);
    old.prepare(`INSERT INTO events (run_id, t_s, t_ms, kind, severity, message) VALUES (1, 0.1, ?, 'gap', 'warning', 'gap of 2 s')`).run(Date.UTC(2026, 0, 5) + 100);
    old.close();

    const db = openStore(path);
    expect(schemaVersion(db)).toBe(SCHEMA_VERSION);
    const run = getRun(db, 1)!;
    expect(run.fibre).toBe('W25-03');
    expect(run.clock).toBe('host'); // the column migration 2 added, with its default
    expect(run.windows).toBe(0); // the windows table exists now
    expect(listRuns(db)).toHaveLength(1);
    expect(listEvents(db, 1)[0].message).toBe('gap of 2 s');
    const s = readSamples(db, 1, 'angle');
    expect(Array.from(s.t)).toEqual([0, 0.05, 0.1]);
    expect(Math.abs(s.v[2] - 3e-3)).toBeLessThanOrEqual(2 ** -24 * 1e-3); // float32 of the 1e-3 half-spread
    expect(db.pragma('integrity_check', { simple: true })).toBe('ok');
    db.close();
    // opening again applies nothing
    const again = openStore(path);
    expect(migrate(again)).toEqual([]);
    again.close();
  });

  it('refuses a store written by a newer schema, naming both versions', () => {
    const path = tmpFile();
    const db = openStore(path);
    db.pragma(`user_version = ${SCHEMA_VERSION + 1}`);
    db.close();
    expect(() => openStore(path)).toThrow(new RegExp(`schema version ${SCHEMA_VERSION + 1}, newer than this fibrewatch's \\(${SCHEMA_VERSION}\\): upgrade fibrewatch`));
    // reading it says the same: the fix is a newer program, not a read-write open
    expect(() => openStore(path, { readonly: true })).toThrow(/upgrade fibrewatch$/);
  });
});
