/** `fibrewatch record --station F`: acquire from the serial device until SIGINT/SIGTERM. */
import { loadStation } from '../../config/station.js';
import { recordRun } from '../../app/record.js';
import { makeLiveSink } from '../../app/live-sink.js';
import { createDispatcher } from '../../alerts/alert-dispatcher.js';
import { UsageError } from '../../domain/errors.js';
import { safeText } from '../../display/safe-text.js';
import { openForWrite } from '../store.js';

/** Log lines and alert lines for the terminal: names from the station file or the device shown terminal-safe. */
const log = (l: string) => process.stderr.write(safeText(l) + '\n');
const stderr = { write: (s: string) => process.stderr.write(s.split('\n').map(safeText).join('\n')) };

export async function recordCommand(opts: { station: string; db?: string; device?: string; waitForDevice?: boolean }): Promise<void> {
  const station = loadStation(opts.station);
  const device = opts.device ?? station.input.device;
  if (!device) throw new UsageError(`${opts.station}: input.device: is required for record (or give --device)`);
  const db = openForWrite(opts.db);
  try {
    await recordRun(db, station, {
      device,
      waitForDevice: opts.waitForDevice,
      log,
      makeSink: (session) => makeLiveSink(station, session, { log, dispatcher: createDispatcher(station.alerts, { stderr }) }),
    });
  } finally {
    db.close();
  }
}
