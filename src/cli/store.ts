/** Opening the store from a command, with one clear line when that, or anything later on the store, fails. */
import { existsSync } from 'node:fs';
import type Database from 'better-sqlite3';
import { explainStoreError, openStore } from '../../db/open.js';
import { sqliteReadStore, type ReadStore } from '../../db/read-store.js';
import { RuntimeError, UsageError } from '../domain/errors.js';
import { archiveLabel, isArchiveUrl } from '../../db/pg/archive-url.js';

/** The store this command opened last: names the file when a fault surfaces later (a full disk mid-import). */
let current: string | undefined;

/** What --db names: the flag, else $FIBREWATCH_DB, else ./fibrewatch.db — a file, or for reading commands the archive's URL. */
function dbTarget(opt?: string): string {
  return opt ?? process.env.FIBREWATCH_DB ?? './fibrewatch.db';
}

/**
 * The path of a station's SQLite store (the flag, else $FIBREWATCH_DB, else
 * ./fibrewatch.db). An archive URL here is bad usage, refused with a message
 * that shows no password: this command works on a station's file.
 */
export function dbPath(opt?: string): string {
  const path = dbTarget(opt);
  if (isArchiveUrl(path)) throw new UsageError(`--db ${archiveLabel(path)}: this command works on a station's SQLite store, not on the lab archive`);
  return path;
}

/** Notes of a read-only open (an upgrade, a copy in memory) are warnings on stderr. */
const note = (m: string) => process.stderr.write(`fibrewatch: note: ${m}\n`);

/** Open an existing store for reading (queries); exit 1 with the path when there is none. */
export function openForQuery(opt?: string): Database.Database {
  const path = dbPath(opt);
  current = path;
  if (!existsSync(path)) throw new RuntimeError(`${path}: no store here (use --db or $FIBREWATCH_DB)`);
  return openStore(path, { readonly: true, onNote: note });
}

/** Open (creating if needed) a store for writing. */
export function openForWrite(opt?: string): Database.Database {
  const path = dbPath(opt);
  current = path;
  return openStore(path);
}

/**
 * Open the store for reading through the one interface every reading command
 * uses (db/read-store.ts): a station's SQLite file, or the lab archive when
 * the value is a postgres:// or postgresql:// URL (docs/archive.md).
 */
export async function openReadStore(opt?: string): Promise<ReadStore> {
  const where = dbTarget(opt);
  if (isArchiveUrl(where)) {
    current = undefined;
    // loaded only here: a command on a station's file never loads the PostgreSQL client
    const { openArchiveReadStore } = await import('../../db/pg/postgres-read-store.js');
    return openArchiveReadStore(where, { onNote: note });
  }
  return sqliteReadStore(openForQuery(opt), where);
}

/** Run `fn` with a read store, always closing it. */
export async function withReadStore<T>(opt: string | undefined, fn: (store: ReadStore) => Promise<T>): Promise<T> {
  const store = await openReadStore(opt);
  try {
    return await fn(store);
  } finally {
    await store.close();
  }
}

/** An SQLite fault raised by a command's work on the store, as one line naming the store (undefined: not a store fault). */
export function storeFault(e: unknown): Error | undefined {
  const code = (e as { code?: unknown })?.code;
  if (current === undefined || typeof code !== 'string' || !code.startsWith('SQLITE_')) return undefined;
  return explainStoreError(e, current);
}
