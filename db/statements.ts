/**
 * Statements prepared once per connection: `prepared(db, build)` builds a
 * module's statements the first time a connection asks and hands the same
 * ones back afterwards (better-sqlite3: prepare once, run many times).
 */
import type { Database } from 'better-sqlite3';

const caches = new WeakMap<object, WeakMap<Database, unknown>>();

/** The statements `build` makes for `db`, prepared on first use; `build` itself is the cache key. */
export function prepared<T>(db: Database, build: (db: Database) => T): T {
  let perBuild = caches.get(build);
  if (!perBuild) caches.set(build, (perBuild = new WeakMap()));
  let s = perBuild.get(db) as T | undefined;
  if (s === undefined) perBuild.set(db, (s = build(db)));
  return s;
}
