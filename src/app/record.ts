/**
 * Live acquisition: the station's serial device → the one data path → the
 * store, until SIGINT, SIGTERM or SIGHUP. Survives unplug/replug (the
 * supervisor keeps the run open and reports `reconnect` and `gap`). At start,
 * a run of the station left `recording` by a crash is marked `interrupted`,
 * and a run whose recorder is still alive makes this one refuse to start. A
 * full disk closes the run as `interrupted` with a `store-full` event.
 */
import { existsSync } from 'node:fs';
import type Database from 'better-sqlite3';
import type { Station } from '../config/station.js';
import { SerialSupervisor, SerialTransportError } from '../../drivers/serial-transport.js';
import { lastDeviceTime, markInterrupted, openRuns } from '../../db/runs.js';
import { checkpoint } from '../../db/open.js';
import { RunSession, type StoredEvent } from './run-session.js';
import { Acquisition, type BlockSink } from './acquisition.js';
import { recorderAlive } from './recorder-liveness.js';
import { isStoreFull } from './store-fault.js';
import { RuntimeError } from '../domain/errors.js';
import { SyncFollower } from './sync-follower.js';
import { archiveLabel } from '../../db/pg/archive-url.js';

export interface RecordOptions {
  device: string;
  waitForDevice?: boolean;
  /** the analysis pipeline fed with converted blocks */
  makeSink?: (session: RunSession) => BlockSink | undefined;
  onEvent?: (e: StoredEvent) => void;
  log?: (line: string) => void;
  /** resolves when acquisition should stop (default: SIGINT/SIGTERM/SIGHUP) */
  stopSignal?: Promise<unknown>;
  /** what to call the source in the store */
  source?: 'device' | 'simulator';
  /**
   * `record --archive`: push the store to this lab archive continuously from a
   * worker thread (src/app/sync-follower.ts); `dbPath` is the store's file,
   * which the worker opens on a connection of its own
   */
  archive?: { url: string; dbPath: string; poll_ms?: number; retryMax_s?: number };
}

/** How long the archive follower gets for its last pass when the recording ends, ms. */
const ARCHIVE_FINISH_MS = 15_000;

const SIGNALS = ['SIGINT', 'SIGTERM', 'SIGHUP'] as const;

/** Why acquisition stopped. */
type Stop = { kind: 'signal' | 'requested' | 'gave-up'; why: string } | { kind: 'store-fault'; why: string; error: unknown };

/** Record until stopped; returns the run number. */
export async function recordRun(db: Database.Database, station: Station, opts: RecordOptions): Promise<number> {
  const log = opts.log ?? ((l: string) => process.stderr.write(l + '\n'));

  let stopping: (s: Stop) => void = () => {};
  const stopped = new Promise<Stop>((res) => { stopping = res; });
  // handlers first: a signal that comes while the port opens still closes the run cleanly.
  // SIGHUP (the terminal or ssh session went away) is a request to stop like SIGTERM.
  const handlers = SIGNALS.map((sig) => [sig, () => stopping({ kind: 'signal', why: sig })] as const);
  const offSignals = () => { for (const [sig, h] of handlers) process.off(sig, h); };
  if (!opts.stopSignal) for (const [sig, h] of handlers) process.on(sig, h);
  else opts.stopSignal.then(() => stopping({ kind: 'requested', why: 'stop requested' }));

  let session: RunSession;
  try {
    session = startSession(db, station, opts, log);
  } catch (e) {
    offSignals();
    throw e;
  }

  // the archive follows from its own thread; nothing here ever waits for it until the run is closed
  let follower: SyncFollower | undefined;
  if (opts.archive) {
    follower = SyncFollower.start({ ...opts.archive, log });
    log(`pushing to the archive ${archiveLabel(opts.archive.url)} in the background`);
  }
  const finishArchive = async (): Promise<void> => {
    if (!follower) return;
    const inTime = await follower.finish(ARCHIVE_FINISH_MS);
    if (!inTime) log(`the archive did not take the end of run ${session.runId} within ${ARCHIVE_FINISH_MS / 1000} s: \`fibrewatch sync\` pushes the rest later`);
  };

  // the port opens while the device may be mid-line: the first line is dropped as torn, and a
  // partial line left when the line ends is torn too
  const acq = new Acquisition(station, session, opts.makeSink?.(session), { midStream: true, live: true });
  /** Store work from an event handler: a failing store stops the run instead of crashing the process. */
  const storing = (fn: () => void): void => {
    try {
      fn();
    } catch (e) {
      stopping({ kind: 'store-fault', why: isStoreFull(e) ? 'store full' : 'store failed', error: e });
    }
  };
  const sup = new SerialSupervisor({
    path: opts.device,
    baud: station.input.baud,
    minDelay_s: station.input.reconnect.min_delay_s,
    maxDelay_s: station.input.reconnect.max_delay_s,
    giveUp_s: station.input.reconnect.give_up_s,
    waitForDevice: opts.waitForDevice,
  });
  sup.on('data', (chunk, host_ms) => storing(() => acq.bytes(chunk, host_ms)));
  sup.on('incident', (inc) => storing(() => acq.incident(inc)));
  sup.on('down', (d) => log(`device ${opts.device} lost (${d.reason}); keeping the run open and retrying`));
  sup.on('up', (u) => {
    if (u.first) {
      if (opts.waitForDevice) log(`device ${opts.device} appeared and is open`);
      return;
    }
    storing(() => acq.resync());
    log(`device ${opts.device} back after ${u.downFor_s.toFixed(1)} s`);
  });
  sup.on('giveup', (err) => stopping({ kind: 'gave-up', why: `gave up: ${err.message}` }));

  try {
    await sup.start();
  } catch (e) {
    offSignals();
    await acq.end().catch(() => {});
    session.close('interrupted');
    await finishArchive();
    if (e instanceof SerialTransportError) throw new RuntimeError(e.message);
    throw e;
  }
  log(`recording run ${session.runId} from ${opts.device}${sup.isUp ? '' : ' (waiting for the device)'} (Ctrl-C to stop)`);

  // commit at least once a second even when data pauses (and keep the heartbeat); checkpoint so the WAL stays small
  const tick = setInterval(() => storing(() => session.flushIfDue(Date.now())), 200);
  const ckpt = setInterval(() => { try { checkpoint(db); } catch { /* a reader holds it; next time */ } }, 60_000);
  const stop = await stopped;
  offSignals();
  clearInterval(tick);
  clearInterval(ckpt);
  await sup.stop();
  if (stop.kind === 'store-fault') return closeAfterStoreFault(session, acq, stop.error).finally(finishArchive);
  try {
    await acq.end();
    session.close(stop.kind === 'gave-up' ? 'interrupted' : 'complete');
  } catch (e) {
    return closeAfterStoreFault(session, acq, e).finally(finishArchive);
  }
  log(`run ${session.runId} closed (${stop.why}): ${session.samples} samples`);
  await finishArchive();
  return session.runId;
}

/**
 * Refuse to start while a recorder of this station is alive; mark the runs
 * of crashed ones interrupted; begin the new run. One transaction, so two
 * `record`s started together cannot both pass the check.
 */
function startSession(db: Database.Database, station: Station, opts: RecordOptions, log: (l: string) => void): RunSession {
  if (!opts.waitForDevice && !existsSync(opts.device)) {
    throw new RuntimeError(`${opts.device}: no such device (is it plugged in? see \`fibrewatch ports\`; --wait-for-device keeps retrying)`);
  }
  return db.transaction(() => {
    const now = Date.now();
    const alive = openRuns(db, station.station).filter((r) => recorderAlive(r, now));
    const live = alive.find((r) => r.source !== 'file'); // an import of the same station may run beside a recorder
    if (live) {
      const ago = live.heartbeat_ms === null ? '' : `, heartbeat ${((now - live.heartbeat_ms) / 1000).toFixed(1)} s ago`;
      throw new RuntimeError(`station ${station.station} is already recording: run ${live.id}, pid ${live.pid} on ${live.host}${ago}; stop that recorder first`);
    }
    const left = markInterrupted(db, station.station, alive.map((r) => r.id));
    if (left.length) log(`run${left.length > 1 ? 's' : ''} ${left.join(', ')} had been left recording (crash or power loss): marked interrupted`);
    // the last crashed run: if the device clock went on, the new run says what fell between the two
    const prev = left.length ? Math.max(...left) : undefined;
    const lastDevice_s = prev === undefined ? undefined : lastDeviceTime(db, prev);
    return new RunSession(db, station, {
      source: opts.source ?? 'device', sourcePath: opts.device, onEvent: opts.onEvent,
      previous: lastDevice_s === undefined ? undefined : { run: prev!, lastDevice_s },
    });
  }).immediate();
}

/** The store failed (a full disk): close the run as interrupted as far as the store allows, then fail with one line. */
async function closeAfterStoreFault(session: RunSession, acq: Acquisition, error: unknown): Promise<never> {
  const full = isStoreFull(error);
  const what = full ? 'the store is full' : `the store failed (${(error as Error)?.message ?? error})`;
  try {
    // decide what the decoder and the clock guard hold: counted as lost below if it does not fit
    acq.finishInput();
  } catch {
    // the store refused it
  }
  // the last windows and alert deliveries need no room in the store until the close
  await acq.endAnalysis().catch(() => {});
  const r = session.closeAfterFault({
    kind: full ? 'store-full' : 'internal-error',
    severity: 'alarm',
    message: `${what}: run closed as interrupted; samples not stored are lost`,
    data: { error: (error as Error)?.message ?? String(error), code: (error as { code?: unknown })?.code ?? null },
  });
  throw new RuntimeError(
    `${what}: run ${session.runId} ${r.closed ? 'closed as interrupted' : 'left open (the next record marks it interrupted)'} with ${r.samplesStored} samples`
    + `${r.samplesLost ? ` (${r.samplesLost} not stored)` : ''}${r.eventStored ? '' : '; no room for its event'}`,
  );
}
