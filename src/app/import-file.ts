/**
 * Import of a recorded file as a new run: the file's bytes go through the
 * identical decoder, store and pipeline a live device would use.
 */
import type Database from 'better-sqlite3';
import type { Station } from '../config/station.js';
import { replayFile } from '../../drivers/replay.js';
import { RunSession, type StoredEvent } from './run-session.js';
import { Acquisition } from './acquisition.js';
import { makeLiveSink } from './live-sink.js';

export interface ImportOptions {
  /** UTC ms of the file's first sample; default now minus the record's duration (with a warning) */
  startedAt_ms?: number;
  onProgress?: (bytesDone: number, bytesTotal: number) => void;
  onEvent?: (e: StoredEvent) => void;
  log?: (line: string) => void;
}

export async function importFile(db: Database.Database, station: Station, path: string, opts: ImportOptions = {}): Promise<{ runId: number; samples: number; badRecords: number }> {
  // a provisional start keeps event times sensible until the duration is known
  const provisional = opts.startedAt_ms ?? Date.now();
  const session = new RunSession(db, station, { source: 'file', sourcePath: path, startedAt_ms: provisional, onEvent: opts.onEvent });
  const acq = new Acquisition(station, session, makeLiveSink(station, session, { live: false, log: opts.log }));
  await replayFile(path, acq.decoder, (r) => acq.handle(r), { onProgress: opts.onProgress });
  await acq.end();
  if (opts.startedAt_ms === undefined) {
    const start = Date.now() - session.lastTime_s * 1000;
    session.setStartedAt(start);
    opts.log?.(`warning: no --started-at given; the run is dated now minus its duration (${new Date(start).toISOString()})`);
  }
  session.close('complete');
  return { runId: session.runId, samples: session.samples, badRecords: acq.decoder.stats.badRecords };
}
