/**
 * Import of a recorded file as a new run: the file's bytes go through the
 * identical decoder, store and pipeline a live device would use.
 *
 * SIGINT, SIGTERM or SIGHUP during the import, and a full disk, close the run
 * as `interrupted` with what was stored so far and fail with one line
 * (`ImportInterrupted`), never leaving it `recording`.
 */
import type Database from 'better-sqlite3';
import type { Station } from '../config/station.js';
import { replayFile } from '../../drivers/replay.js';
import { RunSession, type StoredEvent } from './run-session.js';
import { Acquisition } from './acquisition.js';
import { amplitudePriorFor, makeLiveSink } from './live-sink.js';
import { isStoreFull } from './store-fault.js';
import { RuntimeError } from '../domain/errors.js';

export interface ImportOptions {
  /** UTC ms of the file's first sample; default now minus the record's duration (with a warning) */
  startedAt_ms?: number;
  onProgress?: (bytesDone: number, bytesTotal: number) => void;
  onEvent?: (e: StoredEvent) => void;
  log?: (line: string) => void;
  /** listen for SIGINT, SIGTERM and SIGHUP and stop the import on them (default true) */
  signals?: boolean;
}

/** The import stopped before the end of the file; the run is closed as interrupted (exit 1). */
export class ImportInterrupted extends RuntimeError {
  constructor(message: string, readonly runId: number, readonly samples: number) {
    super(message);
    this.name = 'ImportInterrupted';
  }
}

const SIGNALS = ['SIGINT', 'SIGTERM', 'SIGHUP'] as const;

/** Thrown from the replay's sink to end the read loop at the next chunk. */
class Stop extends Error {
  constructor(readonly signal: string) {
    super(`stopped by ${signal}`);
  }
}

export async function importFile(db: Database.Database, station: Station, path: string, opts: ImportOptions = {}): Promise<{ runId: number; samples: number; badRecords: number }> {
  // a provisional start keeps event times sensible until the duration is known
  const provisional = opts.startedAt_ms ?? Date.now();
  const amplitudePrior = await amplitudePriorFor(db, station, opts.log);
  const session = new RunSession(db, station, { source: 'file', sourcePath: path, startedAt_ms: provisional, onEvent: opts.onEvent });
  const acq = new Acquisition(station, session, makeLiveSink(station, session, { live: false, log: opts.log, amplitudePrior }));
  let signal: string | undefined;
  const handlers = SIGNALS.map((sig) => [sig, () => { signal ??= sig; }] as const);
  if (opts.signals ?? true) for (const [sig, h] of handlers) process.on(sig, h);
  try {
    try {
      await replayFile(path, acq.decoder, (r) => {
        // the reads are asynchronous, so a signal is seen between two chunks
        if (signal) throw new Stop(signal);
        acq.handle(r);
      }, { onProgress: opts.onProgress });
      await acq.end();
    } catch (e) {
      if (e instanceof Stop) {
        // what is stored stays; the pipeline is not finished (the user asked to stop now)
        const r = session.closeAfterFault();
        throw new ImportInterrupted(`import of ${path} interrupted by ${e.signal}: run ${session.runId} closed as interrupted with ${r.samplesStored} samples`, session.runId, r.samplesStored);
      }
      if (isStoreFull(e)) {
        await acq.endAnalysis().catch(() => {});
        const r = session.closeAfterFault({
          kind: 'store-full', severity: 'alarm', message: 'the store is full: import stopped, run closed as interrupted',
          data: { error: (e as Error).message, code: (e as { code?: unknown }).code ?? null },
        });
        throw new ImportInterrupted(
          `the store is full: import of ${path} stopped, run ${session.runId} ${r.closed ? 'closed as interrupted' : 'left open'} with ${r.samplesStored} samples${r.eventStored ? '' : '; no room for its event'}`,
          session.runId, r.samplesStored,
        );
      }
      throw e;
    }
  } finally {
    for (const [sig, h] of handlers) process.off(sig, h);
  }
  if (opts.startedAt_ms === undefined) {
    const start = Date.now() - session.lastTime_s * 1000;
    session.setStartedAt(start);
    opts.log?.(`warning: no --started-at given; the run is dated now minus its duration (${new Date(start).toISOString()})`);
  }
  session.close('complete');
  return { runId: session.runId, samples: session.samples, badRecords: acq.decoder.stats.badRecords };
}
