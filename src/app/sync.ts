/**
 * One sync pass: push what a station's store holds and the lab archive does
 * not (docs/archive.md). Runs whose account (db/sync-source.ts runDigest) is
 * what the archive recorded at their last complete sync are skipped without
 * reading them; every other run is brought up to date in transactions of at
 * most `batchBytes` of sample chunks each. Each transaction reads the
 * archive's marks under a lock on the run, reads the station's rows past them
 * in one SQLite snapshot, and commits the rows with the run's counts — so a
 * pass cut off anywhere leaves the archive exact, and the next pass resumes.
 */
import type Database from 'better-sqlite3';
import { chunksFrom, eventsAfter, runChannels, runChunkCount, runDigest, snapshot, stationRun, stationRuns, stationsAndFibres, windowsAfter,
  type StationRun, type StoredChunkRow, type StoredEventRow, type StoredWindowRow } from '../../db/sync-source.js';
import type { ArchiveMarks, ArchiveWriter } from '../../db/pg/archive-writer.js';
import type { ArchiveSyncNote } from '../../db/archive-sync-state.js';

export interface SyncPassOptions {
  /** sample-chunk bytes per transaction (a resumable step); default 16 MiB */
  batchBytes?: number;
  /** windows, events or chunk rows per transaction at most; default 20 000 */
  batchRows?: number;
  /** UTC ms now (tests); default Date.now */
  now?: () => number;
  /** after each transaction of a run that takes several */
  onProgress?: (p: SyncProgress) => void;
  /** the runs brought up to date, to note in the station's store (it must be writable) */
  onSynced?: (notes: ArchiveSyncNote[]) => void;
  /** checked between transactions: stop the pass early (what is committed stays) */
  shouldStop?: () => boolean;
  /** a run of which the archive holds more than this store (an older copy of the store): not touched */
  onBehind?: (r: StationRun) => void;
}

/** Progress through one run. */
export interface SyncProgress {
  run: number;
  archive_run: number;
  /** chunks the archive now holds of the run, of those the station holds */
  chunks_done: number;
  chunks_total: number;
  bytes: number;
}

/** What a pass did to one run. */
export interface RunSync {
  run: number;
  uid: string;
  archive_run: number;
  chunks: number;
  windows: number;
  events: number;
  bytes: number;
  transactions: number;
  /** t_s of the last sample the archive holds of the run */
  synced_to_s: number | null;
}

/** What a pass did. */
export interface SyncPassResult {
  /** runs in the station's store */
  runs: number;
  synced: RunSync[];
  /** runs the archive already had as they are */
  up_to_date: number;
  /** runs not sent yet: still recording with nothing stored */
  waiting: number;
  /** the pass stopped early (shouldStop) */
  stopped: boolean;
}

/** A run still recording with nothing stored yet is sent once it has something (an import that finds no samples removes its run). */
const nothingYet = (r: StationRun) => r.status === 'recording' && r.samples === 0 && r.max_window === null && r.max_event === null;

/** Push every run the archive does not hold as the station does. */
export async function syncPass(db: Database.Database, archive: ArchiveWriter, opts: SyncPassOptions = {}): Promise<SyncPassResult> {
  const runs = stationRuns(db);
  const known = await archive.knownRuns(runs.map((r) => r.uid));
  const waiting = runs.filter(nothingYet).length;
  const todo = runs.filter((r) => !nothingYet(r) && known.get(r.uid)?.digest !== runDigest(r));
  const out: SyncPassResult = { runs: runs.length, synced: [], up_to_date: runs.length - waiting - todo.length, waiting, stopped: false };
  if (!todo.length) return out;
  const sf = stationsAndFibres(db);
  await archive.putStationsAndFibres(sf.stations, sf.fibres);
  for (const r of todo) {
    if (opts.shouldStop?.()) {
      out.stopped = true;
      break;
    }
    const id = known.get(r.uid)?.id ?? await archive.ensureRun(r);
    const res = await syncRun(db, archive, r, id, opts);
    if (!res) continue;
    const { complete, ...done } = res;
    out.synced.push(done);
    // a run left part-way was stopped between transactions (shouldStop)
    if (!complete) {
      out.stopped = true;
      break;
    }
  }
  return out;
}

/** One batch of a run's rows past the archive's marks, read in one snapshot with the run's account. */
interface Batch {
  run: StationRun;
  /** chunks the archive holds in an older state (its last chunk of a channel, grown since) */
  grown: StoredChunkRow[];
  fresh: StoredChunkRow[];
  windows: StoredWindowRow[];
  events: StoredEventRow[];
  bytes: number;
  /** everything past the marks is in this batch */
  complete: boolean;
  /** the archive holds more of the run than this store does (an older copy of the store): left alone */
  behind: boolean;
}

const chunkBytes = (c: StoredChunkRow) => c.value_blob.length + (c.time_blob?.length ?? 0) + (c.flags_blob?.length ?? 0);
const sameChunk = (c: StoredChunkRow, m: { count: number; t1_s: number; crc32: number | null }) => c.count === m.count && c.t1_s === m.t1_s && c.crc32 === m.crc32;

function readBatch(db: Database.Database, runId: number, marks: ArchiveMarks, maxBytes: number, maxRows: number): Batch | undefined {
  return snapshot(db, () => {
    const run = stationRun(db, runId);
    if (!run) return undefined;
    const grown: StoredChunkRow[] = [];
    const fresh: StoredChunkRow[] = [];
    let bytes = 0;
    let complete = true;
    let behind = (run.max_window ?? -1) < marks.max_window || (run.max_event ?? 0) < marks.max_event;
    const channels = runChannels(db, runId);
    if ([...marks.chunks.keys()].some((ch) => !channels.includes(ch))) behind = true;
    for (const ch of channels) {
      const m = marks.chunks.get(ch);
      const rows = chunksFrom(db, runId, ch, m ? m.seq : 0, maxRows + 1);
      // the archive's last chunk of the channel must be here, at least as full
      if (m && (rows.length === 0 || rows[0].seq !== m.seq || rows[0].count < m.count)) behind = true;
      let taken = 0;
      for (const c of rows) {
        if (m && c.seq === m.seq) {
          if (!sameChunk(c, m)) grown.push(c);
          continue;
        }
        // always at least one chunk per transaction, so a chunk larger than the budget still goes
        if (taken >= maxRows || (bytes > 0 && bytes + chunkBytes(c) > maxBytes)) {
          complete = false;
          break;
        }
        fresh.push(c);
        bytes += chunkBytes(c);
        taken++;
      }
      if (!complete) break;
    }
    const windows = windowsAfter(db, runId, marks.max_window, maxRows + 1);
    const events = eventsAfter(db, runId, marks.max_event, maxRows + 1);
    if (windows.length > maxRows || events.length > maxRows) complete = false;
    return { run, grown, fresh, windows: windows.slice(0, maxRows), events: events.slice(0, maxRows), bytes, complete, behind };
  });
}

/** Bring one run up to date, one transaction per batch; undefined when the run vanished from the station meanwhile. */
async function syncRun(db: Database.Database, archive: ArchiveWriter, r: StationRun, id: number, opts: SyncPassOptions): Promise<(RunSync & { complete: boolean }) | undefined> {
  const maxBytes = opts.batchBytes ?? 16 * 1024 * 1024;
  const maxRows = opts.batchRows ?? 20_000;
  const now = opts.now ?? Date.now;
  const res: RunSync & { complete: boolean } = {
    run: r.id, uid: r.uid, archive_run: id, chunks: 0, windows: 0, events: 0, bytes: 0, transactions: 0, synced_to_s: null, complete: false,
  };
  let held = -1;
  for (;;) {
    const step = await archive.transaction(async () => {
      const marks = await archive.lockRun(id);
      if (held < 0) held = [...marks.chunks.values()].reduce((n, m) => n + m.seq + 1, 0);
      const b = readBatch(db, r.id, marks, maxBytes, maxRows);
      if (!b) return undefined;
      if (b.behind) return { b, synced_at_ms: 0, synced_to_s: null };
      // every transaction leaves the archive's start equal to the station's, with the events' stamps to match
      if (b.run.started_at_ms !== marks.started_at_ms) await archive.moveStart(id, marks.started_at_ms, b.run.started_at_ms);
      await archive.upsertChunks(id, b.grown);
      await archive.copyChunks(id, b.fresh);
      await archive.copyWindows(id, b.windows);
      await archive.copyEvents(id, b.events);
      const synced_at_ms = now();
      const settled = await archive.settleRun(id, b.complete ? { run: b.run, digest: runDigest(b.run), synced_at_ms } : undefined);
      return { b, synced_at_ms, ...settled };
    });
    if (!step) return undefined;
    const { b } = step;
    if (b.behind) {
      opts.onBehind?.(r);
      return undefined;
    }
    res.transactions++;
    res.chunks += b.fresh.length + b.grown.length;
    res.windows += b.windows.length;
    res.events += b.events.length;
    res.bytes += b.bytes + b.grown.reduce((n, c) => n + chunkBytes(c), 0);
    res.synced_to_s = step.synced_to_s;
    held += b.fresh.length;
    if (b.complete) {
      res.complete = true;
      opts.onSynced?.([{ run: r.id, archive: archive.label, archive_run: id, synced_at_ms: step.synced_at_ms, synced_to_s: step.synced_to_s }]);
      return res;
    }
    if (opts.onProgress) opts.onProgress({ run: r.id, archive_run: id, chunks_done: held, chunks_total: runChunkCount(db, r.id), bytes: res.bytes });
    if (opts.shouldStop?.()) return res;
  }
}
