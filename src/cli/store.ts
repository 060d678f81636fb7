/** Opening the store from a command, with a clear error when it is missing. */
import { existsSync } from 'node:fs';
import type Database from 'better-sqlite3';
import { openStore } from '../../db/open.js';
import { RuntimeError } from '../domain/errors.js';

/** The store path: the flag, else $FIBREWATCH_DB, else ./fibrewatch.db. */
export function dbPath(opt?: string): string {
  return opt ?? process.env.FIBREWATCH_DB ?? './fibrewatch.db';
}

/** Open an existing store for reading (queries); exit 1 with the path when there is none. */
export function openForQuery(opt?: string): Database.Database {
  const path = dbPath(opt);
  if (!existsSync(path)) throw new RuntimeError(`${path}: no store here (use --db or $FIBREWATCH_DB)`);
  return openStore(path, { readonly: true });
}

/** Open (creating if needed) a store for writing. */
export function openForWrite(opt?: string): Database.Database {
  return openStore(dbPath(opt));
}

/** Run `fn` with a query connection, always closing it. */
export function withQueryStore<T>(opt: string | undefined, fn: (db: Database.Database) => T): T {
  const db = openForQuery(opt);
  try {
    return fn(db);
  } finally {
    db.close();
  }
}
