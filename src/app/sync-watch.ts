/**
 * Keep the archive following a station's store: a sync pass whenever another
 * connection has committed to the store (PRAGMA data_version, cheap to poll),
 * and through an outage of the archive a capped, jittered backoff
 * (src/domain/backoff.ts) until it answers again, then the catching-up pass.
 * Used by `sync --watch` and, in a worker thread, by `record --archive`.
 */
import type Database from 'better-sqlite3';
import { nextDelay } from '../domain/backoff.js';
import { ArchiveWriter } from '../../db/pg/archive-writer.js';
import { ArchiveError, archiveLabel, explainArchiveError } from '../../db/pg/connect.js';
import { syncPass, type SyncPassOptions, type SyncPassResult } from './sync.js';

export interface SyncWatchOptions extends SyncPassOptions {
  /** the archive, postgres://… */
  url: string;
  /** one line for people (stderr, or the recorder's log) */
  log: (line: string) => void;
  /** resolves when to stop: the pass under way finishes first */
  stop: Promise<unknown>;
  /** after the stop, one more pass for what was committed last (a recorder's closing of its run) */
  finalPass?: boolean;
  /** how often the store is looked at for changes, ms; default 500 */
  poll_ms?: number;
  /** backoff while the archive does not answer, s; default 1 … 5 (a refused connection costs the server nothing) */
  retryMin_s?: number;
  retryMax_s?: number;
  /** throw a fault that retrying cannot cure (a bad password, missing rights) when no pass has succeeded yet; default false: log it and keep retrying */
  failFast?: boolean;
  /** after every pass that did something, and after the first */
  onPass?: (r: SyncPassResult, elapsed_s: number) => void;
  onNote?: (message: string) => void;
}

const MB = (b: number) => (b / 1e6).toFixed(1);

/** Follow the store until `stop`; resolves when done (never rejects, unless failFast). */
export async function syncWatch(db: Database.Database, opts: SyncWatchOptions): Promise<void> {
  const label = archiveLabel(opts.url);
  let stopped = false;
  let wake: () => void = () => {};
  opts.stop.then(() => {
    stopped = true;
    wake();
  });
  const sleep = (ms: number) => new Promise<void>((res) => {
    const t = setTimeout(res, ms);
    wake = () => {
      clearTimeout(t);
      res();
    };
  });
  const token = () => db.pragma('data_version', { simple: true }) as number;

  let archive: ArchiveWriter | undefined;
  let seen: number | undefined;
  let attempt = 0;
  let downSince_ms: number | undefined;
  let everSynced = false;
  let last = false;
  for (;;) {
    if (stopped) {
      if (!opts.finalPass || last) break;
      last = true;
      seen = undefined;
    }
    try {
      const t = token();
      if (t !== seen) {
        archive ??= await ArchiveWriter.open(opts.url, { onNote: opts.onNote });
        const t0 = performance.now();
        // the token is taken before the pass reads: a commit during the pass brings another pass
        const r = await syncPass(db, archive, { ...opts, shouldStop: () => stopped && !last });
        seen = t;
        attempt = 0;
        const elapsed_s = (performance.now() - t0) / 1000;
        if (downSince_ms !== undefined) {
          const bytes = r.synced.reduce((n, x) => n + x.bytes, 0);
          opts.log(`archive ${label} reachable again after ${((Date.now() - downSince_ms) / 1000).toFixed(0)} s: caught up ${r.synced.length} run(s), ${MB(bytes)} MB in ${elapsed_s.toFixed(1)} s`);
          downSince_ms = undefined;
        }
        if (r.synced.length || !everSynced) opts.onPass?.(r, elapsed_s);
        everSynced = true;
      }
    } catch (e) {
      // a fault of the station's store (busy, moved) is said as such; anything else is the archive's
      const code = String((e as { code?: unknown })?.code ?? '');
      const err = code.startsWith('SQLITE_') ? new Error(`the station's store: ${(e as Error).message}`) : explainArchiveError(e, label);
      await archive?.close();
      archive = undefined;
      seen = undefined;
      const curable = err instanceof ArchiveError ? err.transient : false;
      if (opts.failFast && !curable && !everSynced) throw err;
      if (downSince_ms === undefined) {
        downSince_ms = Date.now();
        opts.log(`${err.message}; retrying (the station's store keeps everything)`);
      }
      if (stopped && last) break;
      const delay_s = curable ? nextDelay(Math.min(attempt++, 30), opts.retryMin_s ?? 1, opts.retryMax_s ?? 5, Math.random()) : (opts.retryMax_s ?? 5);
      await sleep(delay_s * 1000);
      continue;
    }
    if (stopped) continue;
    await sleep(opts.poll_ms ?? 500);
  }
  await archive?.close();
}
