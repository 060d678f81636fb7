/** `fibrewatch mark RUN LABEL [--at ISO] [--db PATH]`: note a configuration change as a `mark` event. */
import { existsSync } from 'node:fs';
import { parseDateArg } from '../../../db/runs.js';
import { RuntimeError, UsageError } from '../../domain/errors.js';
import { storeMark } from '../../app/mark.js';
import { safeText } from '../../display/safe-text.js';
import { dbPath, openForWrite } from '../store.js';

export async function markCommand(run: number, label: string, opts: { at?: string; db?: string; json?: boolean }): Promise<void> {
  let at_ms: number | undefined;
  if (opts.at !== undefined) {
    try {
      at_ms = parseDateArg(opts.at);
    } catch {
      throw new UsageError(`--at: "${opts.at}" is not YYYY-MM-DD or an ISO 8601 time`);
    }
  }
  // a mark belongs to a run of an existing store: never create one
  const path = dbPath(opts.db);
  if (!existsSync(path)) throw new RuntimeError(`${path}: no store here (use --db or $FIBREWATCH_DB)`);
  const db = openForWrite(opts.db);
  try {
    const m = storeMark(db, run, label, at_ms);
    process.stdout.write(opts.json ? JSON.stringify(m) + '\n' : `run ${m.run}: mark "${safeText(m.label)}" at ${m.t} (t_s ${m.t_s.toFixed(3)})\n`);
  } finally {
    db.close();
  }
}
