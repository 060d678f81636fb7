/**
 * Per-window fit results of a run (src/domain/window-result.ts WindowResult, one row each).
 */
import type { Database } from 'better-sqlite3';
import { WINDOW_FIELDS, type WindowResult } from '../src/domain/window-result.js';
import { prepared } from './statements.js';

/** WindowResult fields stored as columns of the same name (index → idx). */
const FIELDS = WINDOW_FIELDS.filter((f) => f !== 'index');

const LIST = `SELECT idx, ${FIELDS.join(', ')} FROM windows WHERE run_id = ? ORDER BY idx`;

/**
 * A raw row (values in LIST's column order) as a WindowResult. Written as one
 * object literal, so every result has the same compact shape: rows as objects
 * from the driver, or built field by field, are dictionaries of several kB
 * each, and a week-long run has ten thousand windows.
 */
const fromRow = new Function('r', `return { index: r[0], ${FIELDS.map((f, i) => `${f}: r[${i + 1}]`).join(', ')} };`) as (r: unknown[]) => WindowResult;

const statements = (db: Database) => ({
  insert: db.prepare(`INSERT OR REPLACE INTO windows (run_id, idx, ${FIELDS.join(', ')})
                      VALUES (?, ?, ${FIELDS.map(() => '?').join(', ')})`),
  list: db.prepare(LIST).raw(),
});

/** Store (or replace, by index) window results in one transaction. Non-finite numbers are stored as null. */
export function insertWindows(db: Database, runId: number, rows: readonly WindowResult[]): void {
  if (rows.length === 0) return;
  const ins = prepared(db, statements).insert;
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

/** A run's window results in index order. */
export function listWindows(db: Database, runId: number): WindowResult[] {
  return (prepared(db, statements).list.all(runId) as unknown[][]).map(fromRow);
}

/** The same, one row at a time (a week-long run has ten thousand windows). Finish the iteration before writing on this connection. */
export function* iterateWindows(db: Database, runId: number): Generator<WindowResult> {
  // a fresh statement: an iterating statement is busy until the loop ends, and callers may nest
  for (const r of db.prepare(LIST).raw().iterate(runId) as Iterable<unknown[]>) yield fromRow(r);
}
