/**
 * Open (and create or upgrade) a fibrewatch store, and say plainly what is
 * wrong when that cannot be done: every failure becomes one line naming the
 * file (a RuntimeError, exit 1, or for a file that is no store a UsageError,
 * exit 2), never SQLite's bare message or a stack.
 */
import { accessSync, constants, existsSync, readFileSync, statSync } from 'node:fs';
import { dirname } from 'node:path';
import Database from 'better-sqlite3';
import type { Database as DB } from 'better-sqlite3';
import { migrate, schemaVersion, SCHEMA_VERSION } from './migrations.js';
import { RuntimeError, UsageError } from '../src/domain/errors.js';

export interface OpenStoreOptions {
  /** open for reading only (the file must exist); default false */
  readonly?: boolean;
  /** ms to wait for another connection's lock before SQLITE_BUSY; default 5000 */
  busyTimeout_ms?: number;
  /**
   * told, in one line, when a read-only open had to do more than open: upgrade
   * an older schema in place, or read a copy in memory; default: silent
   */
  onNote?: (message: string) => void;
  /** largest store (bytes) read into memory when it cannot be read in place; default 1 GiB */
  maxCopy_bytes?: number;
}

/** WAL size kept after a checkpoint (bytes); larger WALs are truncated back to this. */
const JOURNAL_SIZE_LIMIT_BYTES = 64 * 1024 * 1024;
const MAX_COPY_BYTES = 1024 * 1024 * 1024;
const MB = (bytes: number): string => (bytes / 1e6).toFixed(1);

/**
 * Open the store at `path`. Read-write: WAL journal, synchronous=NORMAL,
 * foreign keys on, migrations applied; `close()` then leaves the file in
 * rollback-journal mode when it is the last connection, so that a store at rest
 * can be read where its folder is not writable (WAL needs a `-shm` file beside
 * it). Read-only: see openForReading.
 */
export function openStore(path: string, opts: OpenStoreOptions = {}): DB {
  if (path !== ':memory:' && !existsSync(dirname(path))) throw new RuntimeError(`${path}: the folder ${dirname(path)} does not exist`);
  if (opts.readonly) return openForReading(path, opts);
  try {
    return openWritable(path, opts);
  } catch (e) {
    throw explainStoreError(e, path);
  }
}

/** Read-write open; SQLite's errors are left for the caller to explain. */
function openWritable(path: string, opts: OpenStoreOptions): DB {
  const db = new Database(path);
  try {
    db.pragma(`busy_timeout = ${busyTimeout(opts)}`);
    db.pragma('foreign_keys = ON');
    // the first read: a file that is no database fails here, before anything is written
    const v = schemaVersion(db);
    refuseNewer(path, v);
    if (v === 0) refuseForeign(db, path);
    // WAL: readers (dashboard, queries) never block the recorder, and a crash
    // leaves a consistent file.
    const mode = db.pragma('journal_mode = WAL', { simple: true });
    if (mode !== 'wal' && path !== ':memory:') throw new RuntimeError(`${path}: cannot switch to WAL journal (got ${String(mode)})`);
    // synchronous=NORMAL in WAL: no fsync per commit, only at checkpoints. A
    // process crash loses nothing committed; a power cut (or OS crash) may lose
    // the last commits but never corrupts the file. The recorder commits at least
    // once a second, so that bounds the loss to about the last second of samples.
    db.pragma('synchronous = NORMAL');
    db.pragma(`journal_size_limit = ${JOURNAL_SIZE_LIMIT_BYTES}`);
    migrate(db);
  } catch (e) {
    db.close();
    throw e;
  }
  if (path !== ':memory:') {
    const close = db.close.bind(db);
    db.close = () => {
      if (db.open && !db.inTransaction) {
        try {
          // only succeeds when no other connection has the file open; otherwise the last writer to close does it
          db.pragma('busy_timeout = 0');
          db.pragma('journal_mode = DELETE');
        } catch {
          // busy, read-only or full: the file simply stays in WAL mode, as consistent as before
        }
      }
      return close();
    };
  }
  return db;
}

/**
 * Open an existing store for reading. Where SQLite cannot read it in place —
 * a store in WAL mode in a folder (or file) this user may not write, so its
 * `-shm` file cannot be made — the file is read into memory instead (up to
 * `maxCopy_bytes`). An older schema is upgraded in place when the file is
 * writable, else in the copy. A newer one is refused: upgrade fibrewatch.
 */
function openForReading(path: string, opts: OpenStoreOptions): DB {
  if (!existsSync(path)) throw new RuntimeError(`${path}: no store here`);
  try {
    accessSync(path, constants.R_OK);
  } catch (e) {
    throw new RuntimeError(`${path}: cannot read the store (${(e as NodeJS.ErrnoException).code ?? e})`);
  }
  let db: DB;
  try {
    db = new Database(path, { readonly: true, fileMustExist: true });
  } catch (e) {
    throw explainStoreError(e, path);
  }
  let v: number;
  try {
    db.pragma(`busy_timeout = ${busyTimeout(opts)}`);
    v = schemaVersion(db);
    refuseNewer(path, v);
    if (v === 0) refuseForeign(db, path, true);
  } catch (e) {
    db.close();
    if (cannotWriteHere(e)) return readCopy(path, opts, 'the store is in WAL mode and its -shm file cannot be made here (read-only file or folder)');
    throw explainStoreError(e, path);
  }
  if (v === SCHEMA_VERSION) {
    db.pragma('foreign_keys = ON');
    return db;
  }
  db.close();
  try {
    openWritable(path, opts).close();
  } catch (e) {
    if (cannotWriteHere(e)) return readCopy(path, opts, `the store has schema version ${v} (this fibrewatch reads ${SCHEMA_VERSION}) and is read-only here`);
    throw explainStoreError(e, path);
  }
  opts.onNote?.(`${path}: upgraded the store from schema version ${v} to ${SCHEMA_VERSION}`);
  return openForReading(path, opts);
}

/** Read the whole file into an in-memory database (WAL header bytes reset), upgraded if older, then made query-only. */
function readCopy(path: string, opts: OpenStoreOptions, why: string): DB {
  const wal = `${path}-wal`;
  if (existsSync(wal) && statSync(wal).size > 0) {
    throw new RuntimeError(`${path}: ${why}, and ${wal} holds commits not yet in the store file: copy the store with its -wal file to a writable folder and read it there`);
  }
  const size = statSync(path).size;
  const cap = opts.maxCopy_bytes ?? MAX_COPY_BYTES;
  if (size > cap) throw new RuntimeError(`${path}: ${why}, and at ${MB(size)} MB it is too big to read from a copy in memory: copy it to a writable folder and read it there`);
  const buf = readFileSync(path);
  // bytes 18 and 19 of the header are 2 in WAL mode (SQLite file format, "The Database Header"); 1 = rollback journal, which memory needs
  if (buf.length >= 100 && buf.toString('latin1', 0, 16) === 'SQLite format 3\0') buf[18] = buf[19] = 1;
  let db: DB;
  try {
    db = new Database(buf);
  } catch (e) {
    throw explainStoreError(e, path);
  }
  try {
    const v = schemaVersion(db);
    refuseNewer(path, v);
    if (v === 0) refuseForeign(db, path, true);
    migrate(db);
    db.pragma('foreign_keys = ON');
    db.pragma('query_only = ON');
  } catch (e) {
    db.close();
    throw explainStoreError(e, path);
  }
  opts.onNote?.(`${path}: ${why}: reading a copy in memory (${MB(size)} MB)`);
  return db;
}

const busyTimeout = (opts: OpenStoreOptions): number => Math.max(0, Math.floor(opts.busyTimeout_ms ?? 5000));

function refuseNewer(path: string, v: number): void {
  if (v > SCHEMA_VERSION) throw new RuntimeError(`${path}: the store has schema version ${v}, newer than this fibrewatch's (${SCHEMA_VERSION}): upgrade fibrewatch`);
}

/** Version 0 is a new, empty file, or some other program's SQLite database. */
function refuseForeign(db: DB, path: string, reading = false): void {
  const tables = (db.prepare("SELECT name FROM sqlite_master WHERE type = 'table' ORDER BY name LIMIT 4").all() as { name: string }[]).map((r) => r.name);
  if (tables.length) throw new UsageError(`${path}: not a fibrewatch store (an SQLite database of another program, with tables ${tables.join(', ')}${tables.length === 4 ? ', …' : ''})`);
  if (reading) throw new UsageError(`${path}: not a fibrewatch store (an empty database)`);
}

const sqliteCode = (e: unknown): string => {
  const c = (e as { code?: unknown })?.code;
  return typeof c === 'string' ? c : '';
};

/** SQLite could not write (or create) a file it needs: a read-only file, folder or file system. */
function cannotWriteHere(e: unknown): boolean {
  const c = sqliteCode(e);
  return c.startsWith('SQLITE_READONLY') || c.startsWith('SQLITE_CANTOPEN') || c === 'SQLITE_PERM';
}

/**
 * One line for a store fault (a better-sqlite3 SqliteError or a file-system
 * error), naming the file: exit 1 for a fault of the machine or the file, exit 2
 * for a file that is not a store at all. Our own errors pass through unchanged.
 */
export function explainStoreError(e: unknown, path: string): Error {
  if (e instanceof RuntimeError || e instanceof UsageError) return e;
  const code = sqliteCode(e);
  const msg = (e as Error)?.message ?? String(e);
  const sq = `SQLite: ${msg}`;
  if (code === 'SQLITE_NOTADB') return new UsageError(`${path}: not a fibrewatch store (not an SQLite database)`);
  if (code.startsWith('SQLITE_CORRUPT')) return new RuntimeError(`${path}: the store is damaged (${sq}); \`fibrewatch check --db ${path}\` lists what is affected`);
  if (code === 'SQLITE_FULL') return new RuntimeError(`${path}: disk full (${sq}); what was committed before is kept`);
  if (code.startsWith('SQLITE_READONLY')) return new RuntimeError(`${path}: the store is read-only here (${sq}); record and import need write access to the file and its folder`);
  if (code.startsWith('SQLITE_CANTOPEN') || code === 'SQLITE_PERM') return new RuntimeError(`${path}: cannot open the store (${whyCannotOpen(path) ?? sq})`);
  if (code.startsWith('SQLITE_BUSY') || code.startsWith('SQLITE_LOCKED')) return new RuntimeError(`${path}: the store is locked by another process (${sq})`);
  if (code.startsWith('SQLITE_IOERR')) return new RuntimeError(`${path}: input/output error (${code}: ${msg})`);
  if (code.startsWith('SQLITE_')) return new RuntimeError(`${path}: store error (${code}: ${msg})`);
  const fsCode = (e as NodeJS.ErrnoException)?.code;
  if (fsCode === 'ENOSPC') return new RuntimeError(`${path}: disk full (${msg})`);
  if (fsCode && /^E[A-Z]+$/.test(fsCode)) return new RuntimeError(`${path}: ${fsCode} (${msg})`);
  return e instanceof Error ? e : new Error(msg);
}

/** The file-system reason a store cannot be opened for writing, when one can be named. */
function whyCannotOpen(path: string): string | undefined {
  const dir = dirname(path);
  try {
    accessSync(dir, constants.W_OK);
  } catch (e) {
    return `its folder ${dir} is not writable: ${(e as NodeJS.ErrnoException).code}`;
  }
  if (existsSync(path)) {
    try {
      accessSync(path, constants.R_OK | constants.W_OK);
    } catch (e) {
      return `the file is not writable: ${(e as NodeJS.ErrnoException).code}`;
    }
    if (statSync(path).isDirectory()) return 'it is a folder';
  }
  return undefined;
}

/** Result of a checkpoint (PRAGMA wal_checkpoint). */
export interface CheckpointResult {
  /** true when another connection blocked the checkpoint from finishing */
  busy: boolean;
  /** pages in the WAL, and pages copied back into the database */
  logPages: number;
  checkpointedPages: number;
}

/**
 * Copy the WAL back into the database and truncate it (wal_checkpoint(TRUNCATE)).
 * Run it periodically from the writer; a reader that holds a read open makes it busy.
 */
export function checkpoint(db: DB): CheckpointResult {
  const row = (db.pragma('wal_checkpoint(TRUNCATE)') as unknown[])[0] as { busy: number; log: number; checkpointed: number };
  return { busy: row.busy !== 0, logPages: row.log, checkpointedPages: row.checkpointed };
}
