/**
 * A station's store as a sync reads it (src/app/sync.ts): each run's account
 * (counts and high-water marks, folded into a digest the archive keeps), and
 * the rows past the archive's marks — chunks exactly as stored (encoded blobs
 * and CRC-32, never decoded), windows and events with their station ids.
 * Reads are short and bounded; `snapshot` runs several in one read
 * transaction so that a run's account and its rows agree.
 */
import type { Database } from 'better-sqlite3';
import { WINDOW_FIELDS } from '../src/domain/window-result.js';
import type { RunClock, RunSource, RunStatus } from './runs.js';
import type { EventListing } from './events-store.js';
import { prepared } from './statements.js';

/** One run as its station's store accounts for it. */
export interface StationRun {
  id: number;
  uid: string;
  station: string;
  fibre: string;
  started_at_ms: number;
  ended_at_ms: number | null;
  status: RunStatus;
  source: RunSource;
  source_path: string | null;
  clock: RunClock;
  time_origin_s: number | null;
  samples: number;
  gaps: number;
  meta_json: string | null;
  /** the last window index and event id: both only grow (windows and events are appended, never rewritten) */
  max_window: number | null;
  max_event: number | null;
}

/** A station row and a fibre row as stored. */
export interface StationRow { name: string; config_json: string | null; updated_at: number }
export interface FibreRow { name: string; material: string | null; diameter_m: number | null; length_m: number | null; width_m: number | null; thickness_m: number | null }

/** A sample chunk row as stored (the codec's encoding, untouched). */
export interface StoredChunkRow {
  channel: string;
  seq: number;
  t0_s: number;
  t1_s: number;
  count: number;
  time_kind: string;
  dt_s: number | null;
  time_blob: Buffer | null;
  value_kind: string;
  value_base: number | null;
  value_blob: Buffer;
  flags_blob: Buffer | null;
  deflated: number;
  crc32: number | null;
}

/** An event row as stored, with its station id (the listing's fields, the UTC stamp in ms, data as its JSON text). */
export type StoredEventRow = Omit<EventListing, 't' | 'data'> & { id: number; t_ms: number; data_json: string | null };

/** Window columns as stored (index is `idx`). */
export const STORED_WINDOW_COLUMNS = ['idx', ...WINDOW_FIELDS.filter((f) => f !== 'index')] as const;
export type StoredWindowRow = Record<(typeof STORED_WINDOW_COLUMNS)[number], number | string | null>;

const RUN_SELECT = `
  SELECT r.id, r.uid, s.name AS station, f.name AS fibre, r.started_at_ms, r.ended_at_ms, r.status, r.source,
         r.source_path, r.clock, r.time_origin_s, r.samples, r.gaps, r.meta_json,
         (SELECT MAX(idx) FROM windows w WHERE w.run_id = r.id) AS max_window,
         (SELECT MAX(id) FROM events e WHERE e.run_id = r.id) AS max_event
  FROM runs r JOIN stations s ON s.id = r.station_id JOIN fibres f ON f.id = r.fibre_id`;

const statements = (db: Database) => ({
  runs: db.prepare(`${RUN_SELECT} ORDER BY r.id`),
  run: db.prepare(`${RUN_SELECT} WHERE r.id = ?`),
  stations: db.prepare('SELECT name, config_json, updated_at FROM stations ORDER BY id'),
  fibres: db.prepare('SELECT name, material, diameter_m, length_m, width_m, thickness_m FROM fibres ORDER BY id'),
  chunkCount: db.prepare('SELECT COUNT(*) AS n FROM sample_chunks WHERE run_id = ?'),
  channels: db.prepare('SELECT DISTINCT channel FROM sample_chunks WHERE run_id = ? ORDER BY channel'),
  chunks: db.prepare(`SELECT channel, seq, t0_s, t1_s, count, time_kind, dt_s, time_blob, value_kind, value_base, value_blob,
                             flags_blob, deflated, crc32
                      FROM sample_chunks WHERE run_id = ? AND channel = ? AND seq >= ? ORDER BY seq LIMIT ?`),
  windows: db.prepare(`SELECT ${STORED_WINDOW_COLUMNS.join(', ')} FROM windows WHERE run_id = ? AND idx > ? ORDER BY idx LIMIT ?`),
  events: db.prepare(`SELECT id, t_s, t_ms, kind, severity, message, value, threshold, state, data_json
                      FROM events WHERE run_id = ? AND id > ? ORDER BY id LIMIT ?`),
});

/** Every run of the store, oldest id first. */
export function stationRuns(db: Database): StationRun[] {
  return prepared(db, statements).runs.all() as StationRun[];
}

/** One run's account, or undefined. */
export function stationRun(db: Database, id: number): StationRun | undefined {
  return prepared(db, statements).run.get(id) as StationRun | undefined;
}

/** The stations and fibres of the store. */
export function stationsAndFibres(db: Database): { stations: StationRow[]; fibres: FibreRow[] } {
  const st = prepared(db, statements);
  return { stations: st.stations.all() as StationRow[], fibres: st.fibres.all() as FibreRow[] };
}

/**
 * What the archive keeps of a run's account to tell, next time, whether the
 * run changed: every field and mark that moves when the station stores
 * anything for it. `samples` moves with every commit of samples (the
 * writer updates it with the chunks, the last partial one included); windows
 * and events only ever get higher indexes and ids. All of it is read through
 * indexes, so a pass over a store of many finished runs stays cheap.
 */
export function runDigest(r: StationRun): string {
  return JSON.stringify([r.samples, r.gaps, r.status, r.started_at_ms, r.ended_at_ms, r.clock, r.time_origin_s,
    r.source_path, r.meta_json, r.max_window, r.max_event]);
}

/** Chunk rows (all channels) stored for a run. */
export function runChunkCount(db: Database, runId: number): number {
  return (prepared(db, statements).chunkCount.get(runId) as { n: number }).n;
}

/** The channels stored for a run. */
export function runChannels(db: Database, runId: number): string[] {
  return (prepared(db, statements).channels.all(runId) as { channel: string }[]).map((r) => r.channel);
}

/** Up to `limit` chunk rows of one channel from `fromSeq` on, in seq order. */
export function chunksFrom(db: Database, runId: number, channel: string, fromSeq: number, limit: number): StoredChunkRow[] {
  return prepared(db, statements).chunks.all(runId, channel, fromSeq, limit) as StoredChunkRow[];
}

/** Up to `limit` windows after index `afterIdx`, in index order. */
export function windowsAfter(db: Database, runId: number, afterIdx: number, limit: number): StoredWindowRow[] {
  return prepared(db, statements).windows.all(runId, afterIdx, limit) as StoredWindowRow[];
}

/** Up to `limit` events after station id `afterId`, in id order. */
export function eventsAfter(db: Database, runId: number, afterId: number, limit: number): StoredEventRow[] {
  return prepared(db, statements).events.all(runId, afterId, limit) as StoredEventRow[];
}

/** Run `fn`'s reads in one read transaction: one consistent view of the store, however the recorder commits meanwhile. */
export function snapshot<T>(db: Database, fn: () => T): T {
  return db.transaction(fn)();
}
