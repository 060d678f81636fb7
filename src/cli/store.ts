/** Opening the store from a command, with one clear line when that, or anything later on the store, fails. */
import { existsSync } from 'node:fs';
import type Database from 'better-sqlite3';
import { explainStoreError, openStore } from '../../db/open.js';
import { sqliteReadStore, type ReadStore } from '../../db/read-store.js';
import { RuntimeError } from '../domain/errors.js';

/** The store this command opened last: names the file when a fault surfaces later (a full disk mid-import). */
let current: string | undefined;

/** The store path: the flag, else $FIBREWATCH_DB, else ./fibrewatch.db. */
export function dbPath(opt?: string): string {
  return opt ?? process.env.FIBREWATCH_DB ?? './fibrewatch.db';
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

/** Open the store for reading through the one interface every reading command uses (db/read-store.ts). */
export async function openReadStore(opt?: string): Promise<ReadStore> {
  return sqliteReadStore(openForQuery(opt), dbPath(opt));
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
