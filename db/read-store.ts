/**
 * What every reading command, the report and the dashboard ask of a store:
 * one interface, two implementations — a station's SQLite file (this module)
 * and the lab archive on PostgreSQL. Nothing above db/ knows which it has.
 *
 * Asynchronous throughout, because one of the two is a network database;
 * samples come as an async stream of decoded chunks, fetched in small batches
 * so that no read stays open between them (a long export never pins SQLite's
 * WAL, nor holds a server cursor open).
 */
import type { Database } from 'better-sqlite3';
import type { WindowResult } from '../src/domain/window-result.js';
import { getRun, listRuns, type RunFilter, type RunListing, type RunRecord } from './runs.js';
import { countEvents, listEvents, type EventListing, type ListEventsOptions } from './events-store.js';
import { listWindows } from './windows-store.js';
import { fibreRuns, listFibres, type FibreListing, type FibreRun } from './fibres.js';
import { concatChunks, iterateChunks, listChannels, type IterateChunksOptions, type SampleChunk } from './sample-reader.js';
import { archiveStateOf, type ArchiveState } from './archive-sync-state.js';

/** A store opened for reading. */
export interface ReadStore {
  /** 'sqlite' for a station's file, 'postgres' for the lab archive */
  readonly kind: 'sqlite' | 'postgres';
  /** where it is, for messages: the file path, or the URL without its password */
  readonly label: string;
  listRuns(filter?: RunFilter): Promise<RunListing[]>;
  getRun(run: number): Promise<RunRecord | undefined>;
  listWindows(run: number): Promise<WindowResult[]>;
  listEvents(run: number, opts?: ListEventsOptions): Promise<EventListing[]>;
  countEvents(run: number, kind?: string): Promise<number>;
  listChannels(run: number): Promise<string[]>;
  /** one channel's samples within [from_s, to_s), chunk by chunk, in time order */
  chunks(run: number, channel: string, opts?: IterateChunksOptions): AsyncIterable<SampleChunk>;
  listFibres(): Promise<FibreListing[]>;
  fibreRuns(name: string): Promise<FibreRun[]>;
  /** a number that changes whenever another connection commits (cheap: for polling by a live view) */
  changeToken(): Promise<number>;
  /** how far the lab archive is behind for this run (station: from its last sync; archive: from its own record) */
  archiveState(run: number): Promise<ArchiveState>;
  close(): Promise<void>;
}

/** The ReadStore over an open better-sqlite3 connection (closing it closes the connection). */
export function sqliteReadStore(db: Database, label: string): ReadStore {
  return {
    kind: 'sqlite',
    label,
    listRuns: async (f) => listRuns(db, f),
    getRun: async (run) => getRun(db, run),
    listWindows: async (run) => listWindows(db, run),
    listEvents: async (run, o) => listEvents(db, run, o),
    countEvents: async (run, kind) => countEvents(db, run, kind),
    listChannels: async (run) => listChannels(db, run),
    async *chunks(run, channel, o) {
      // iterateChunks runs one short query per batch and keeps no statement open between them
      yield* iterateChunks(db, run, channel, o);
    },
    listFibres: async () => listFibres(db),
    fibreRuns: async (name) => fibreRuns(db, name),
    // PRAGMA data_version changes when another connection commits: no table is read
    changeToken: async () => db.pragma('data_version', { simple: true }) as number,
    archiveState: async (run) => archiveStateOf(db, run),
    close: async () => {
      if (db.open) db.close();
    },
  };
}

/** All of one channel's samples within a range as typed arrays (gathered from `chunks`). */
export async function readAllSamples(store: ReadStore, run: number, channel: string, opts: IterateChunksOptions = {}): Promise<{ t: Float64Array; v: Float64Array; flags: Uint8Array }> {
  const parts: SampleChunk[] = [];
  for await (const c of store.chunks(run, channel, opts)) parts.push(c);
  return concatChunks(parts);
}
