/** `fibrewatch record --station F`: acquire from the serial device until SIGINT/SIGTERM. */
import { loadStation } from '../../config/station.js';
import { recordRun } from '../../app/record.js';
import { makeLiveSink } from '../../app/live-sink.js';
import { UsageError } from '../../domain/errors.js';
import { openForWrite } from '../store.js';

export async function recordCommand(opts: { station: string; db?: string; device?: string; waitForDevice?: boolean }): Promise<void> {
  const station = loadStation(opts.station);
  const device = opts.device ?? station.input.device;
  if (!device) throw new UsageError(`${opts.station}: input.device: is required for record (or give --device)`);
  const db = openForWrite(opts.db);
  try {
    await recordRun(db, station, {
      device,
      waitForDevice: opts.waitForDevice,
      makeSink: (session) => makeLiveSink(station, session),
    });
  } finally {
    db.close();
  }
}
