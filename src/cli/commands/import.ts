/** `fibrewatch import FILE --station F`: a recorded file through the same pipeline, as a new run. */
import { statSync } from 'node:fs';
import cliProgress from 'cli-progress';
import { loadStation } from '../../config/station.js';
import { ImportInterrupted, importFile } from '../../app/import-file.js';
import { buildSummary } from '../../summaries/show-summary.js';
import { deleteRun, parseDateArg } from '../../../db/runs.js';
import { RuntimeError, UsageError } from '../../domain/errors.js';
import { safeText } from '../../display/safe-text.js';
import { dbPath, openForWrite } from '../store.js';
import { renderSummary } from './show.js';
import { sqliteReadStore } from '../../../db/read-store.js';

export async function importCommand(file: string, opts: { station: string; startedAt?: string; db?: string; json?: boolean }): Promise<void> {
  const station = loadStation(opts.station);
  let startedAt_ms: number | undefined;
  if (opts.startedAt !== undefined) {
    try {
      startedAt_ms = parseDateArg(opts.startedAt);
    } catch {
      throw new UsageError(`--started-at: "${opts.startedAt}" is not an ISO 8601 time`);
    }
  }
  let size: number;
  try {
    size = statSync(file).size;
  } catch (e) {
    throw new UsageError(`${file}: cannot read (${(e as NodeJS.ErrnoException).code ?? e})`);
  }
  const db = openForWrite(opts.db);
  const bar = process.stderr.isTTY
    ? new cliProgress.SingleBar({
      format: 'import |{bar}| {percentage}% · {rate} MB/s · eta {eta_formatted}',
      stream: process.stderr,
      hideCursor: true,
    }, cliProgress.Presets.shades_classic)
    : undefined;
  const t0 = performance.now();
  // lines logged while the bar is drawn are held and printed once it is done
  const held: string[] = [];
  const log = (l: string) => (bar ? held.push(safeText(l)) : process.stderr.write(safeText(l) + '\n'));
  const flushLog = () => {
    bar?.stop();
    for (const l of held.splice(0)) process.stderr.write(l + '\n');
  };
  bar?.start(size, 0, { rate: '0.0' });
  try {
    const res = await importFile(db, station, file, {
      startedAt_ms,
      onProgress: (done) => bar?.update(done, { rate: (done / 1e6 / ((performance.now() - t0) / 1000 || 1)).toFixed(1) }),
      log,
    }).catch((e: unknown) => {
      // stopped by a signal or a full disk before anything was stored: leave no empty run behind
      let gone = false;
      try {
        gone = e instanceof ImportInterrupted && e.samples === 0 && deleteRun(db, e.runId);
      } catch {
        // a full store may refuse even the delete: the run stays, closed as interrupted
      }
      if (gone) {
        throw new RuntimeError(`${(e as Error).message.replace(/: run \d+ closed as interrupted with 0 samples$/, '')} before any sample was stored: no run kept`);
      }
      throw e;
    });
    flushLog();
    if (res.samples === 0) {
      // nothing to keep: leave no empty run behind; a file that decodes to nothing is bad input (exit 2)
      deleteRun(db, res.runId);
      throw new UsageError(`${file}: no samples decoded (${res.badRecords} bad records); check the station's input.format and input.${station.input.format === 'frames' ? 'channels' : 'columns'}`);
    }
    const s = await buildSummary(sqliteReadStore(db, dbPath(opts.db)), res.runId);
    process.stdout.write(opts.json ? JSON.stringify(s, null, 2) + '\n' : renderSummary(s));
  } finally {
    flushLog();
    db.close();
  }
}
