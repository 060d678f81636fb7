/** `fibrewatch windows RUN [--json|--csv]`: per-window fit results. */
import { WINDOW_FIELDS, type WindowResult } from '../../domain/window-result.js';
import { getRun } from '../../../db/runs.js';
import { listWindows } from '../../../db/windows-store.js';
import { RuntimeError, UsageError } from '../../domain/errors.js';
import { csv, table, withSigma, fmt } from '../../display/format.js';
import { withReadStore } from '../store.js';
import { windowRows } from '../../report/window-rows.js';

/** Columns of a window row, in order (used for the CSV header when a run has no windows yet). */
export const WINDOW_COLUMNS: string[] = [...WINDOW_FIELDS, 't_mid'];

export async function windowsCommand(run: number, opts: { db?: string; json?: boolean; csv?: boolean }): Promise<void> {
  if (opts.json && opts.csv) throw new UsageError('--json and --csv: choose one');
  await withReadStore(opts.db, async (store) => {
    const r = await store.getRun(run);
    if (!r) throw new RuntimeError(`run ${run}: no such run in this store`);
    const rows = windowRows(await store.listWindows(run), r.started_at_ms);
    if (opts.json) {
      process.stdout.write(JSON.stringify(rows, null, 2) + '\n');
    } else if (opts.csv) {
      const keys = rows.length ? Object.keys(rows[0]) : WINDOW_COLUMNS;
      process.stdout.write(csv(keys, rows.map((o) => keys.map((k) => o[k]))));
    } else if (!rows.length) {
      process.stderr.write(`run ${run}: no windows yet (a window needs analysis.window_periods periods of data)\n`);
    } else {
      process.stdout.write(table(
        ['#', 't_mid (UTC)', 'status', 'period', 'τ (s)', 'Q', 'equilibrium (rad)', 'amplitude (rad)'],
        rows.map((o) => {
          const w = o as unknown as WindowResult & { t_mid: string };
          return [String(w.index), w.t_mid.replace(/\.\d{3}Z$/, 'Z'), w.status, withSigma(w.period_s, w.period_sigma_s, 's'), fmt(w.decay_time_s), fmt(w.q), withSigma(w.equilibrium_rad, w.equilibrium_sigma_rad), fmt(w.amplitude_rad)];
        }),
      ));
    }
  });
}
