/** `fibrewatch record --station F`: acquire from the serial device until SIGINT, SIGTERM or SIGHUP. */
import { loadStation } from '../../config/station.js';
import { recordRun } from '../../app/record.js';
import { amplitudePriorFor, makeLiveSink } from '../../app/live-sink.js';
import { createDispatcher } from '../../alerts/alert-dispatcher.js';
import { UsageError } from '../../domain/errors.js';
import { safeText } from '../../display/safe-text.js';
import { dbPath, openForWrite } from '../store.js';
import { archiveLabel, isArchiveUrl } from '../../../db/pg/archive-url.js';

/** Log lines and alert lines for the terminal: names from the station file or the device shown terminal-safe. */
const log = (l: string) => process.stderr.write(safeText(l) + '\n');
const stderr = { write: (s: string) => process.stderr.write(s.split('\n').map(safeText).join('\n')) };

export async function recordCommand(opts: { station: string; db?: string; device?: string; waitForDevice?: boolean; archive?: string }): Promise<void> {
  const station = loadStation(opts.station);
  const device = opts.device ?? station.input.device;
  if (!device) throw new UsageError(`${opts.station}: input.device: is required for record (or give --device)`);
  if (opts.archive !== undefined && !isArchiveUrl(opts.archive)) throw new UsageError(`--archive: "${archiveLabel(opts.archive)}" is not a postgres:// or postgresql:// URL`);
  const db = openForWrite(opts.db);
  try {
    const amplitudePrior = await amplitudePriorFor(db, station, log);
    await recordRun(db, station, {
      device,
      waitForDevice: opts.waitForDevice,
      log,
      makeSink: (session) => makeLiveSink(station, session, { log, dispatcher: createDispatcher(station.alerts, { stderr }), amplitudePrior }),
      archive: opts.archive === undefined ? undefined : { url: opts.archive, dbPath: dbPath(opts.db) },
    });
  } finally {
    db.close();
  }
}
