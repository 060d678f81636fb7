/**
 * Per-window fit results of a run (src/config/results.ts WindowResult, one row each).
 */
import type { Database } from 'better-sqlite3';
import type { WindowResult } from '../src/domain/window-result.js';

/** WindowResult fields stored as columns of the same name (index → idx). */
const FIELDS = [
  't_start_s', 't_mid_s', 't_end_s', 'samples', 'status', 'period_s', 'period_sigma_s', 'decay_time_s',
  'decay_time_sigma_s', 'q', 'q_sigma', 'amplitude_rad', 'amplitude_sigma_rad', 'equilibrium_rad',
  'equilibrium_sigma_rad', 'drift_rad_per_s', 'drift_sigma_rad_per_s', 'phase_rad', 'residual_rms_rad',
  'chi2_red', 'kappa_Nm_per_rad', 'kappa_sigma_Nm_per_rad', 'shear_modulus_Pa', 'shear_modulus_sigma_Pa', 'temp_C',
] as const satisfies readonly (keyof WindowResult)[];

/** Store (or replace, by index) window results in one transaction. Non-finite numbers are stored as null. */
export function insertWindows(db: Database, runId: number, rows: readonly WindowResult[]): void {
  if (rows.length === 0) return;
  const ins = db.prepare(`INSERT OR REPLACE INTO windows (run_id, idx, ${FIELDS.join(', ')})
                          VALUES (?, ?, ${FIELDS.map(() => '?').join(', ')})`);
  db.transaction(() => {
    rows.forEach((w, i) => {
      if (!Number.isInteger(w.index) || w.index < 0) throw new RangeError(`insertWindows: rows[${i}].index: must be an integer ≥ 0, got ${w.index}`);
      const vals = FIELDS.map((f) => {
        const x = w[f];
        return typeof x === 'number' && !Number.isFinite(x) ? null : x;
      });
      ins.run(runId, w.index, ...vals);
    });
  })();
}

function toResult(r: Record<string, unknown> & { idx: number }): WindowResult {
  const w = { index: r.idx } as Record<string, unknown>;
  for (const f of FIELDS) w[f] = r[f];
  return w as unknown as WindowResult;
}

/** A run's window results in index order. */
export function listWindows(db: Database, runId: number): WindowResult[] {
  const rows = db.prepare(`SELECT idx, ${FIELDS.join(', ')} FROM windows WHERE run_id = ? ORDER BY idx`).all(runId) as (Record<string, unknown> & { idx: number })[];
  return rows.map(toResult);
}

/** The same, one row at a time (a week-long run has ten thousand windows). Finish the iteration before writing on this connection. */
export function* iterateWindows(db: Database, runId: number): Generator<WindowResult> {
  const stmt = db.prepare(`SELECT idx, ${FIELDS.join(', ')} FROM windows WHERE run_id = ? ORDER BY idx`);
  for (const r of stmt.iterate(runId) as Iterable<Record<string, unknown> & { idx: number }>) yield toResult(r);
}
