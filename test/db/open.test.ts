import { afterEach, describe, expect, it } from 'vitest';
import Database from 'better-sqlite3';
import { existsSync, mkdtempSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { checkpoint, openStore } from '../../db/open.js';
import { migrate, schemaVersion, SCHEMA_VERSION } from '../../db/migrations.js';
import { createRun } from '../../db/runs.js';
import { SampleWriter } from '../../db/sample-writer.js';

const dirs: string[] = [];
function tmpFile(): string {
  const d = mkdtempSync(join(tmpdir(), 'fw-db-'));
  dirs.push(d);
  return join(d, 'store.db');
}
afterEach(() => {
  for (const d of dirs.splice(0)) rmSync(d, { recursive: true, force: true });
});

describe('openStore', () => {
  it('sets WAL, synchronous=NORMAL, foreign keys, busy timeout and a WAL size limit', () => {
    const db = openStore(tmpFile());
    expect(db.pragma('journal_mode', { simple: true })).toBe('wal');
    expect(db.pragma('synchronous', { simple: true })).toBe(1); // 1 = NORMAL (SQLite docs, PRAGMA synchronous)
    expect(db.pragma('foreign_keys', { simple: true })).toBe(1);
    expect(db.pragma('busy_timeout', { simple: true })).toBe(5000);
    expect(db.pragma('journal_size_limit', { simple: true })).toBe(64 * 1024 * 1024);
    db.close();
  });

  it('enforces foreign keys', () => {
    const db = openStore(tmpFile());
    expect(() => db.prepare("INSERT INTO events (run_id, t_s, t_ms, kind, severity, message) VALUES (42, 0, 0, 'gap', 'info', 'x')").run())
      .toThrow(/FOREIGN KEY/);
    db.close();
  });

  it('read-only connections read while the writer writes; refuse writes', () => {
    const path = tmpFile();
    const db = openStore(path);
    const run = createRun(db, { station: 's', fibre: { name: 'f' }, startedAt_ms: 0, source: 'simulator' });
    const ro = openStore(path, { readonly: true });
    expect(() => ro.prepare("INSERT INTO stations (name, updated_at) VALUES ('x', 0)").run()).toThrow(/readonly/);
    const w = new SampleWriter(db, run);
    w.append(Float64Array.of(0, 1), { angle: Float64Array.of(1, 2) });
    w.flush();
    expect(ro.prepare('SELECT samples FROM runs WHERE id = ?').get(run)).toEqual({ samples: 2 });
    ro.close();
    db.close();
  });

  it('read-only refuses a missing file; upgrades an old schema in place when the file is writable, and says so', () => {
    expect(() => openStore(tmpFile(), { readonly: true })).toThrow(/no store here/);
    const path = tmpFile();
    const old = new Database(path);
    migrate(old, 1);
    old.close();
    const notes: string[] = [];
    const ro = openStore(path, { readonly: true, onNote: (m) => notes.push(m) });
    expect(schemaVersion(ro)).toBe(SCHEMA_VERSION);
    expect(notes).toEqual([`${path}: upgraded the store from schema version 1 to ${SCHEMA_VERSION}`]);
    expect(() => ro.prepare("INSERT INTO stations (name, updated_at) VALUES ('x', 0)").run()).toThrow(/readonly/);
    ro.close();
  });

  it('checkpoint(TRUNCATE) empties the WAL', () => {
    const path = tmpFile();
    const db = openStore(path);
    const run = createRun(db, { station: 's', fibre: { name: 'f' }, startedAt_ms: 0, source: 'simulator' });
    const w = new SampleWriter(db, run);
    const n = 50_000;
    w.append(Float64Array.from({ length: n }, (_, i) => i * 0.05), { angle: Float64Array.from({ length: n }, (_, i) => Math.sin(i / 7)) });
    w.flush();
    expect(statSync(`${path}-wal`).size).toBeGreaterThan(100_000);
    const r = checkpoint(db);
    expect(r.busy).toBe(false);
    expect(existsSync(`${path}-wal`) ? statSync(`${path}-wal`).size : 0).toBe(0);
    expect(db.pragma('integrity_check', { simple: true })).toBe('ok');
    db.close();
  });
});
