/**
 * The worker thread behind `record --archive` (src/app/sync-follower.ts):
 * its own SQLite connection to the station's store and its own connection to
 * the archive, so nothing the archive does — a slow network, an outage, a
 * large catching-up pass — ever reaches the recorder's event loop. Talks to
 * the recorder only by messages: log lines and pass summaries out, "finish"
 * in.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { openStore } from '../../db/open.js';
import { noteArchiveSync } from '../../db/archive-sync-state.js';
import { syncWatch } from './sync-watch.js';

/** What the recorder hands the worker. */
export interface SyncWorkerData {
  dbPath: string;
  url: string;
  poll_ms?: number;
  retryMax_s?: number;
}

/** Messages from the worker. */
export type SyncWorkerMessage =
  | { kind: 'log'; line: string }
  | { kind: 'pass'; runs: number; chunks: number; bytes: number; elapsed_s: number }
  | { kind: 'done' };

const port = parentPort;
if (port) {
  const data = workerData as SyncWorkerData;
  const post = (m: SyncWorkerMessage) => port.postMessage(m);
  let finish: () => void = () => {};
  const stop = new Promise<void>((res) => { finish = res; });
  port.on('message', (m) => {
    if (m === 'finish') finish();
  });
  const told = new Set<number>();
  // a writable connection of its own: the notes of what the archive holds go into the store (show's archive_lag_s)
  const db = openStore(data.dbPath);
  syncWatch(db, {
    url: data.url,
    stop,
    finalPass: true,
    poll_ms: data.poll_ms,
    retryMax_s: data.retryMax_s,
    log: (line) => post({ kind: 'log', line }),
    onNote: (line) => post({ kind: 'log', line }),
    onBehind: (r) => {
      if (told.has(r.id)) return;
      told.add(r.id);
      post({ kind: 'log', line: `archive: run ${r.id} there holds more than this store does (an older copy of the store?): left as it is` });
    },
    onSynced: (notes) => {
      try {
        noteArchiveSync(db, notes);
      } catch {
        // a busy or full store: the note is informational, the next pass writes it
      }
    },
    onPass: (r, elapsed_s) => post({
      kind: 'pass', runs: r.synced.length, chunks: r.synced.reduce((n, x) => n + x.chunks, 0), bytes: r.synced.reduce((n, x) => n + x.bytes, 0), elapsed_s,
    }),
  }).catch((e) => post({ kind: 'log', line: `archive sync stopped: ${(e as Error).message}` }))
    .finally(() => {
      try {
        db.close();
      } catch {
        // closing is best effort: the recorder's own connection closes the store properly
      }
      post({ kind: 'done' });
    });
}
