/**
 * `fibrewatch sync --db FILE --to URL [--watch]`: push a station's store into
 * the lab archive (docs/archive.md). Idempotent (a second run sends nothing)
 * and resumable (cut off anywhere, run it again: the archive is exact).
 * Progress and the summary go to stderr; `--json` prints what was pushed.
 */
import { accessSync, constants, existsSync } from 'node:fs';
import type Database from 'better-sqlite3';
import { openStore } from '../../../db/open.js';
import { noteArchiveSync } from '../../../db/archive-sync-state.js';
import { ArchiveWriter } from '../../../db/pg/archive-writer.js';
import { archiveLabel, isArchiveUrl } from '../../../db/pg/archive-url.js';
import { ArchiveError } from '../../../db/pg/connect.js';
import { PG_SCHEMA_VERSION } from '../../../db/pg/migrations.js';
import { syncPass, type SyncProgress, type SyncPassResult } from '../../app/sync.js';
import { syncWatch } from '../../app/sync-watch.js';
import { RuntimeError, UsageError } from '../../domain/errors.js';
import { safeText } from '../../display/safe-text.js';
import { dbPath } from '../store.js';

export interface SyncCommandOptions {
  db?: string;
  to?: string;
  watch?: boolean;
  init?: boolean;
  json?: boolean;
  batchMb?: number;
}

const log = (l: string) => process.stderr.write(safeText(l) + '\n');
const note = (m: string) => process.stderr.write(`fibrewatch: note: ${safeText(m)}\n`);
const MB = (b: number) => (b / 1e6).toFixed(1);
const SIGNALS = ['SIGINT', 'SIGTERM', 'SIGHUP'] as const;

/** The station's store: writable when it can be (the notes of what the archive holds go into it), read-only otherwise. */
function openStation(path: string): { db: Database.Database; writable: boolean } {
  if (!existsSync(path)) throw new RuntimeError(`${path}: no store here (use --db or $FIBREWATCH_DB)`);
  let writable = true;
  try {
    accessSync(path, constants.W_OK);
  } catch {
    writable = false;
  }
  if (writable) {
    try {
      return { db: openStore(path), writable: true };
    } catch {
      // a folder we may not write in: read it as it is
    }
  }
  note(`${path}: read-only here: the store will not note what the archive holds (show's archive_* fields)`);
  return { db: openStore(path, { readonly: true, onNote: note }), writable: false };
}

/** A progress line: rewritten in place on a terminal, every 5 s otherwise. */
function progressReporter(): { onProgress: (p: SyncProgress) => void; done: () => void } {
  const tty = process.stderr.isTTY;
  let lastLine = 0;
  let shown = false;
  return {
    onProgress(p) {
      const now = Date.now();
      const line = `run ${p.run} → archive run ${p.archive_run}: ${p.chunks_done}/${p.chunks_total} chunks, ${MB(p.bytes)} MB`;
      if (tty) {
        process.stderr.write(`\r${line}\x1b[K`);
        shown = true;
      } else if (now - lastLine >= 5000) {
        lastLine = now;
        log(line);
      }
    },
    done() {
      if (shown) process.stderr.write('\r\x1b[K');
      shown = false;
    },
  };
}

function summaryLine(label: string, r: SyncPassResult, seconds: number): string {
  const sum = (k: 'chunks' | 'windows' | 'events' | 'bytes') => r.synced.reduce((n, x) => n + x[k], 0);
  const rest = [r.up_to_date ? `${r.up_to_date} already up to date` : '', r.waiting ? `${r.waiting} still empty` : ''].filter(Boolean).join(', ');
  if (!r.synced.length) return `archive ${label}: nothing to push (${r.runs} run(s)${rest ? `: ${rest}` : ''})`;
  return `archive ${label}: pushed ${r.synced.length} run(s)${rest ? ` (${rest})` : ''}: ${sum('chunks')} chunks, ${MB(sum('bytes'))} MB, `
    + `${sum('windows')} windows, ${sum('events')} events in ${seconds.toFixed(1)} s`;
}

export async function syncCommand(opts: SyncCommandOptions): Promise<void> {
  const url = opts.to ?? process.env.FIBREWATCH_ARCHIVE;
  if (!url) throw new UsageError('--to: the archive is required (postgres://USER@HOST/DATABASE), or set $FIBREWATCH_ARCHIVE');
  if (!isArchiveUrl(url)) throw new UsageError(`--to: "${archiveLabel(url)}" is not a postgres:// or postgresql:// URL`);
  const label = archiveLabel(url);
  if (opts.init) {
    const w = await ArchiveWriter.open(url, { onNote: note });
    await w.close();
    log(`archive ${label}: schema version ${PG_SCHEMA_VERSION}, ready for stations to push`);
    return;
  }
  const given = opts.db ?? process.env.FIBREWATCH_DB;
  if (given !== undefined && isArchiveUrl(given)) throw new UsageError(`--db ${archiveLabel(given)}: sync reads a station's SQLite store; the archive goes in --to`);
  const path = dbPath(opts.db);
  if (opts.watch && opts.json) throw new UsageError('--json: not with --watch (it never ends); the log lines go to stderr');
  const batchBytes = Math.round((opts.batchMb ?? 16) * 1e6);
  const { db, writable } = openStation(path);
  const onSynced = writable ? (n: Parameters<typeof noteArchiveSync>[1]) => noteArchiveSync(db, n) : undefined;
  const told = new Set<number>();
  const onBehind = (r: { id: number; uid: string }) => {
    if (told.has(r.id)) return;
    told.add(r.id);
    note(`run ${r.id} (uid ${r.uid}): the archive holds more of it than this store does (an older copy of the store?): left as it is`);
  };

  let stopWith: (why: string) => void = () => {};
  const stop = new Promise<string>((res) => { stopWith = res; });
  let stopping: string | undefined;
  stop.then((why) => { stopping = why; });
  const handlers = SIGNALS.map((sig) => [sig, () => stopWith(sig)] as const);
  for (const [sig, h] of handlers) process.on(sig, h);
  const progress = progressReporter();
  try {
    if (opts.watch) {
      log(`following ${path} into the archive ${label} (Ctrl-C to stop)`);
      // the first pass in full; after it, while a recorder commits every half second, one line a minute at most
      let first = true;
      let lastLine_ms = 0;
      const pending = { runs: new Set<number>(), chunks: 0, bytes: 0, passes: 0 };
      await syncWatch(db, {
        url, stop, log, onNote: note, batchBytes, onSynced, onBehind, failFast: true, onProgress: progress.onProgress,
        onPass: (r, s) => {
          progress.done();
          if (first) {
            first = false;
            lastLine_ms = Date.now();
            log(summaryLine(label, r, s));
            return;
          }
          for (const x of r.synced) pending.runs.add(x.run);
          pending.chunks += r.synced.reduce((n, x) => n + x.chunks, 0);
          pending.bytes += r.synced.reduce((n, x) => n + x.bytes, 0);
          pending.passes++;
          if (Date.now() - lastLine_ms >= 60_000) {
            log(`archive ${label}: ${pending.passes} push(es) in the last ${((Date.now() - lastLine_ms) / 1000).toFixed(0)} s: run(s) ${[...pending.runs].join(', ')}, ${pending.chunks} chunks, ${MB(pending.bytes)} MB`);
            lastLine_ms = Date.now();
            pending.runs.clear();
            pending.chunks = pending.bytes = pending.passes = 0;
          }
        },
      });
      log(`stopped (${stopping ?? 'done'})`);
      return;
    }
    const t0 = performance.now();
    const archive = await ArchiveWriter.open(url, { onNote: note });
    let r: SyncPassResult;
    try {
      r = await syncPass(db, archive, { batchBytes, onSynced, onBehind, onProgress: progress.onProgress, shouldStop: () => stopping !== undefined });
    } catch (e) {
      // a transaction cut off is rolled back by the server: everything before it stays
      if (e instanceof ArchiveError) throw new RuntimeError(`${e.message}; what was pushed before is kept: run sync again to push the rest`);
      throw e;
    } finally {
      progress.done();
      await archive.close();
    }
    const seconds = (performance.now() - t0) / 1000;
    log(summaryLine(label, r, seconds));
    if (opts.json) {
      process.stdout.write(JSON.stringify({
        archive: label, runs: r.runs, up_to_date: r.up_to_date, waiting: r.waiting, seconds,
        synced: r.synced.map(({ transactions, ...x }) => x),
      }, null, 2) + '\n');
    }
    if (r.stopped) throw new RuntimeError(`sync interrupted by ${stopping}: what was pushed is kept; run it again to push the rest`);
  } finally {
    for (const [sig, h] of handlers) process.off(sig, h);
    db.close();
  }
}
