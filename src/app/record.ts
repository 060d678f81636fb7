/**
 * Live acquisition: the station's serial device → the one data path → the
 * store, until SIGINT/SIGTERM. Survives unplug/replug (the supervisor keeps
 * the run open and reports `reconnect` and `gap`); a run left `recording` by a
 * crash is marked `interrupted` at start.
 */
import { existsSync } from 'node:fs';
import type Database from 'better-sqlite3';
import type { Station } from '../config/station.js';
import { SerialSupervisor, SerialTransportError } from '../../drivers/serial-transport.js';
import { markInterrupted } from '../../db/runs.js';
import { checkpoint } from '../../db/open.js';
import { RunSession, type StoredEvent } from './run-session.js';
import { Acquisition, type BlockSink } from './acquisition.js';
import { RuntimeError } from '../domain/errors.js';

export interface RecordOptions {
  device: string;
  waitForDevice?: boolean;
  /** the analysis pipeline fed with converted blocks */
  makeSink?: (session: RunSession) => BlockSink | undefined;
  onEvent?: (e: StoredEvent) => void;
  log?: (line: string) => void;
  /** resolves when acquisition should stop (default: SIGINT/SIGTERM) */
  stopSignal?: Promise<unknown>;
  /** what to call the source in the store */
  source?: 'device' | 'simulator';
}

/** Record until stopped; returns the run number. */
export async function recordRun(db: Database.Database, station: Station, opts: RecordOptions): Promise<number> {
  const log = opts.log ?? ((l: string) => process.stderr.write(l + '\n'));
  const left = markInterrupted(db, station.station);
  if (left.length) log(`run${left.length > 1 ? 's' : ''} ${left.join(', ')} had been left recording (crash or power loss): marked interrupted`);

  if (!opts.waitForDevice && !existsSync(opts.device)) {
    throw new RuntimeError(`${opts.device}: no such device (is it plugged in? see \`fibrewatch ports\`; --wait-for-device keeps retrying)`);
  }
  const session = new RunSession(db, station, { source: opts.source ?? 'device', sourcePath: opts.device, onEvent: opts.onEvent });
  // the port opens while the device may be mid-line: the first line is dropped as torn
  const acq = new Acquisition(station, session, opts.makeSink?.(session), { midStream: true });
  const sup = new SerialSupervisor({
    path: opts.device,
    baud: station.input.baud,
    minDelay_s: station.input.reconnect.min_delay_s,
    maxDelay_s: station.input.reconnect.max_delay_s,
    giveUp_s: station.input.reconnect.give_up_s,
    waitForDevice: opts.waitForDevice,
  });
  sup.on('data', (chunk, host_ms) => acq.bytes(chunk, host_ms));
  sup.on('incident', (inc) => acq.incident(inc));
  sup.on('down', (d) => log(`device ${opts.device} lost (${d.reason}); keeping the run open and retrying`));
  sup.on('up', (u) => {
    if (u.first) {
      if (opts.waitForDevice) log(`device ${opts.device} appeared and is open`);
      return;
    }
    acq.resync();
    log(`device ${opts.device} back after ${u.downFor_s.toFixed(1)} s`);
  });

  let stopping: (why: string) => void = () => {};
  const stopped = new Promise<string>((res) => { stopping = res; });
  sup.on('giveup', (err) => stopping(`gave up: ${err.message}`));
  // handlers first: a signal that comes while the port opens still closes the run cleanly
  const sigint = () => stopping('SIGINT');
  const sigterm = () => stopping('SIGTERM');
  if (!opts.stopSignal) {
    process.on('SIGINT', sigint);
    process.on('SIGTERM', sigterm);
  } else {
    opts.stopSignal.then(() => stopping('stop requested'));
  }

  try {
    await sup.start();
  } catch (e) {
    process.off('SIGINT', sigint);
    process.off('SIGTERM', sigterm);
    await acq.end();
    session.close('interrupted');
    if (e instanceof SerialTransportError) throw new RuntimeError(e.message);
    throw e;
  }
  log(`recording run ${session.runId} from ${opts.device}${sup.isUp ? '' : ' (waiting for the device)'} (Ctrl-C to stop)`);

  // commit at least once a second even when data pauses; checkpoint so the WAL stays small
  const tick = setInterval(() => session.flushIfDue(Date.now()), 200);
  const ckpt = setInterval(() => { try { checkpoint(db); } catch { /* a reader holds it; next time */ } }, 60_000);
  const why = await stopped;
  process.off('SIGINT', sigint);
  process.off('SIGTERM', sigterm);
  clearInterval(tick);
  clearInterval(ckpt);
  await sup.stop();
  await acq.end();
  session.close(why.startsWith('gave up') ? 'interrupted' : 'complete');
  log(`run ${session.runId} closed (${why}): ${session.samples} samples`);
  return session.runId;
}
