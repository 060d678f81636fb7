/**
 * Open (and create or upgrade) a fibrewatch store.
 */
import Database from 'better-sqlite3';
import type { Database as DB } from 'better-sqlite3';
import { migrate, schemaVersion, SCHEMA_VERSION } from './migrations.js';

export interface OpenStoreOptions {
  /** open read-only (the file must exist and be at the current schema); default false */
  readonly?: boolean;
  /** ms to wait for another connection's lock before SQLITE_BUSY; default 5000 */
  busyTimeout_ms?: number;
}

/** WAL size kept after a checkpoint (bytes); larger WALs are truncated back to this. */
const JOURNAL_SIZE_LIMIT_BYTES = 64 * 1024 * 1024;

/**
 * Open the store at `path`: WAL journal, synchronous=NORMAL, foreign keys on,
 * migrations applied (read-write only).
 */
export function openStore(path: string, opts: OpenStoreOptions = {}): DB {
  const readonly = opts.readonly ?? false;
  const db = new Database(path, { readonly, fileMustExist: readonly });
  try {
    db.pragma(`busy_timeout = ${Math.max(0, Math.floor(opts.busyTimeout_ms ?? 5000))}`);
    db.pragma('foreign_keys = ON');
    if (readonly) {
      const v = schemaVersion(db);
      if (v !== SCHEMA_VERSION) {
        throw new Error(`${path}: store schema version ${v}, this program reads ${SCHEMA_VERSION}: open it once read-write to upgrade`);
      }
      return db;
    }
    // WAL: readers (dashboard, queries) never block the recorder, and a crash
    // leaves a consistent file.
    const mode = db.pragma('journal_mode = WAL', { simple: true });
    if (mode !== 'wal' && path !== ':memory:') throw new Error(`${path}: cannot switch to WAL journal (got ${String(mode)})`);
    // synchronous=NORMAL in WAL: no fsync per commit, only at checkpoints. A
    // process crash loses nothing committed; a power cut (or OS crash) may lose
    // the last commits but never corrupts the file. The recorder commits at least
    // once a second, so that bounds the loss to about the last second of samples.
    db.pragma('synchronous = NORMAL');
    db.pragma(`journal_size_limit = ${JOURNAL_SIZE_LIMIT_BYTES}`);
    migrate(db);
    return db;
  } catch (e) {
    db.close();
    throw e;
  }
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
