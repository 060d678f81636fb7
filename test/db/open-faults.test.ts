/**
 * What openStore and explainStoreError make of every store fault: one line
 * naming the file, a RuntimeError (exit 1) for faults of the machine or the
 * file, a UsageError (exit 2) for a file that is no store. Each fault is made
 * for real: SQLite's own errors from real files (a full store is made with
 * SQLite's max_page_count, which fails a write with the same SQLITE_FULL a full
 * disk gives; the CLI tests fill a real file system too).
 */
import { afterEach, describe, expect, it } from 'vitest';
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import { explainStoreError, openStore } from '../../db/open.js';
import { SCHEMA_VERSION } from '../../db/migrations.js';
import { RuntimeError, UsageError } from '../../src/domain/errors.js';
import { readSamples } from '../../db/sample-reader.js';
import { overwrite, tempDir, writeRun, writeRunInto } from './chunk-store-fixture.js';

const cleanups: (() => void)[] = [];
afterEach(() => {
  for (const c of cleanups.splice(0)) c();
});
function folder(): string {
  const t = tempDir();
  cleanups.push(t.remove);
  return t.dir;
}

/** The error `fn` throws (fails the test when it throws none). */
function thrown(fn: () => unknown): Error {
  try {
    fn();
  } catch (e) {
    return e as Error;
  }
  throw new Error('did not throw');
}

const oneLine = (e: Error) => expect(e.message).not.toContain('\n');

describe('openStore refuses plainly', () => {
  it('a missing folder (writing and reading): exit 1', () => {
    const p = join(folder(), 'no', 'such', 'store.db');
    for (const readonly of [false, true]) {
      const e = thrown(() => openStore(p, { readonly }));
      expect(e).toBeInstanceOf(RuntimeError);
      expect(e.message).toBe(`${p}: the folder ${join(p, '..')} does not exist`);
    }
  });

  it('a file that is not a database (writing and reading): exit 2, and the file is left as it was', () => {
    const p = join(folder(), 'notes.db');
    writeFileSync(p, 'balance log, 3 March: fibre replaced\n'.repeat(20));
    const before = readFileSync(p);
    for (const readonly of [false, true]) {
      const e = thrown(() => openStore(p, { readonly }));
      expect(e).toBeInstanceOf(UsageError);
      expect(e.message).toBe(`${p}: not a fibrewatch store (not an SQLite database)`);
    }
    expect(readFileSync(p).equals(before)).toBe(true);
  });

  it('another program\'s SQLite database: exit 2, and no table of ours is added to it', () => {
    const p = join(folder(), 'other.db');
    const o = new Database(p);
    o.exec('CREATE TABLE contacts (name TEXT); CREATE TABLE notes (body TEXT)');
    o.close();
    for (const readonly of [false, true]) {
      const e = thrown(() => openStore(p, { readonly }));
      expect(e).toBeInstanceOf(UsageError);
      expect(e.message).toBe(`${p}: not a fibrewatch store (an SQLite database of another program, with tables contacts, notes)`);
    }
    const o2 = new Database(p, { readonly: true });
    expect((o2.prepare("SELECT name FROM sqlite_master WHERE type = 'table' ORDER BY name").all() as { name: string }[]).map((r) => r.name)).toEqual(['contacts', 'notes']);
    o2.close();
  });

  it('an empty file: no store to read (exit 2); a writer makes a store of it', () => {
    const p = join(folder(), 'empty.db');
    writeFileSync(p, '');
    const e = thrown(() => openStore(p, { readonly: true }));
    expect(e).toBeInstanceOf(UsageError);
    expect(e.message).toBe(`${p}: not a fibrewatch store (an empty database)`);
    openStore(p).close();
    openStore(p, { readonly: true }).close();
  });

  it('a store from a newer fibrewatch: "upgrade fibrewatch" whether reading or writing', () => {
    const p = join(folder(), 'newer.db');
    openStore(p).close();
    const d = new Database(p);
    d.pragma(`user_version = ${SCHEMA_VERSION + 4}`);
    d.close();
    for (const readonly of [false, true]) {
      const e = thrown(() => openStore(p, { readonly }));
      expect(e).toBeInstanceOf(RuntimeError);
      expect(e.message).toBe(`${p}: the store has schema version ${SCHEMA_VERSION + 4}, newer than this fibrewatch's (${SCHEMA_VERSION}): upgrade fibrewatch`);
    }
  });
});

describe('explainStoreError', () => {
  it('a full store (SQLITE_FULL): disk full, what was committed is kept', () => {
    const p = join(folder(), 'full.db');
    const db = openStore(p);
    writeRunInto(db, 1000);
    const pages = db.pragma('page_count', { simple: true }) as number;
    db.pragma(`max_page_count = ${pages + 2}`);
    const e = thrown(() => writeRunInto(db, 200_000));
    expect((e as { code?: string }).code).toBe('SQLITE_FULL');
    const x = explainStoreError(e, p);
    expect(x).toBeInstanceOf(RuntimeError);
    expect(x.message).toBe(`${p}: disk full (SQLite: database or disk is full); what was committed before is kept`);
    db.close();
    // and it is: the first run's samples are all there
    const ro = openStore(p, { readonly: true });
    expect(readSamples(ro, 1, 'angle').t.length).toBe(1000);
    ro.close();
  });

  it('a store another process holds locked (SQLITE_BUSY)', () => {
    const p = join(folder(), 'busy.db');
    const a = openStore(p);
    const b = openStore(p, { busyTimeout_ms: 0 });
    a.prepare('BEGIN IMMEDIATE').run();
    const e = thrown(() => writeRunInto(b, 10));
    a.prepare('ROLLBACK').run();
    const x = explainStoreError(e, p);
    expect(x).toBeInstanceOf(RuntimeError);
    expect(x.message).toMatch(new RegExp(`^${p.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}: the store is locked by another process \\(SQLite: database is locked\\)$`));
    a.close();
    b.close();
  });

  it('a damaged store (SQLITE_CORRUPT): names `fibrewatch check`', () => {
    const p = join(folder(), 'damaged.db');
    writeRun(p, 30_000);
    const ro = openStore(p, { readonly: true });
    const root = (ro.prepare("SELECT rootpage FROM sqlite_master WHERE name = 'sample_chunks'").get() as { rootpage: number }).rootpage;
    ro.close();
    overwrite(p, (root - 1) * 4096, new Uint8Array(64).fill(0xee));
    const db = openStore(p, { readonly: true });
    const e = thrown(() => readSamples(db, 1, 'angle'));
    db.close();
    expect((e as { code?: string }).code).toMatch(/^SQLITE_CORRUPT/);
    const x = explainStoreError(e, p);
    expect(x).toBeInstanceOf(RuntimeError);
    expect(x.message).toBe(`${p}: the store is damaged (SQLite: database disk image is malformed); \`fibrewatch check --db ${p}\` lists what is affected`);
    oneLine(x);
  });

  it('passes our own errors through and keeps unknown ones', () => {
    const r = new RuntimeError('x');
    expect(explainStoreError(r, 'p')).toBe(r);
    const t = new TypeError('y');
    expect(explainStoreError(t, 'p')).toBe(t);
  });
});

describe('a store at rest', () => {
  it('is left in rollback-journal mode by the last writer to close (no -wal, no -shm), so any reader can open it', () => {
    const p = join(folder(), 'rest.db');
    const db = openStore(p);
    expect(db.pragma('journal_mode', { simple: true })).toBe('wal');
    writeRunInto(db, 5000);
    db.close();
    // bytes 18 and 19 of the header: 1 = rollback journal, 2 = WAL (SQLite file format, "The Database Header")
    expect([...readFileSync(p).subarray(18, 20)]).toEqual([1, 1]);
    expect(existsSync(`${p}-wal`) || existsSync(`${p}-shm`)).toBe(false);
    // the next writer is in WAL again
    const again = openStore(p);
    expect(again.pragma('journal_mode', { simple: true })).toBe('wal');
    again.close();
  });

  it('stays in WAL mode, readable, while another connection still has it open', () => {
    const p = join(folder(), 'shared.db');
    const db = openStore(p);
    writeRunInto(db, 5000);
    const reader = openStore(p, { readonly: true });
    db.close();
    expect([...readFileSync(p).subarray(18, 20)]).toEqual([2, 2]);
    expect(readSamples(reader, 1, 'angle').t.length).toBe(5000);
    reader.close();
  });
});
