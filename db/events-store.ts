/**
 * Events (alerts and incidents) of a run.
 */
import type { Database } from 'better-sqlite3';
import { prepared } from './statements.js';

/** An event to store; t_s is seconds since the run's start, t_ms the same instant in UTC ms. */
export interface EventRow {
  t_s: number;
  t_ms: number;
  kind: string;
  severity: string;
  message: string;
  value?: number | null;
  threshold?: number | null;
  state?: string | null;
  data?: Record<string, unknown> | null;
}

/** An event as docs/commands.md's `events --json` gives it. */
export interface EventListing {
  t: string;
  t_s: number;
  kind: string;
  severity: string;
  message: string;
  value: number | null;
  threshold: number | null;
  state: string | null;
  data: Record<string, unknown> | null;
}

const nullableNumber = (x: number | null | undefined): number | null => (x === undefined || x === null || !Number.isFinite(x) ? null : x);

const statements = (db: Database) => ({
  insert: db.prepare(`INSERT INTO events (run_id, t_s, t_ms, kind, severity, message, value, threshold, state, data_json)
                      VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`),
  addGaps: db.prepare('UPDATE runs SET gaps = gaps + ? WHERE id = ?'),
  countAll: db.prepare('SELECT COUNT(*) AS n FROM events WHERE run_id = ?'),
  countKind: db.prepare('SELECT COUNT(*) AS n FROM events WHERE run_id = ? AND kind = ?'),
});

/**
 * Store events in one transaction. Each 'gap' event also counts in runs.gaps,
 * so run listings show gaps without scanning events.
 */
export function insertEvents(db: Database, runId: number, rows: readonly EventRow[]): void {
  if (rows.length === 0) return;
  rows.forEach((r, i) => {
    if (!Number.isFinite(r.t_s)) throw new RangeError(`insertEvents: rows[${i}].t_s: must be finite, got ${r.t_s}`);
    if (!Number.isFinite(r.t_ms)) throw new RangeError(`insertEvents: rows[${i}].t_ms: must be finite, got ${r.t_ms}`);
    if (!r.kind) throw new Error(`insertEvents: rows[${i}].kind: must not be empty`);
  });
  const { insert: ins, addGaps: gaps } = prepared(db, statements);
  db.transaction(() => {
    let nGaps = 0;
    for (const r of rows) {
      ins.run(runId, r.t_s, Math.round(r.t_ms), r.kind, r.severity, r.message, nullableNumber(r.value), nullableNumber(r.threshold),
        r.state ?? null, r.data === undefined || r.data === null ? null : JSON.stringify(r.data));
      if (r.kind === 'gap') nGaps++;
    }
    if (nGaps > 0) gaps.run(nGaps, runId);
  })();
}

/** Options for listEvents. */
export interface ListEventsOptions {
  /** only these kinds; default all */
  kinds?: readonly string[];
}

/** A run's events in time order. */
export function listEvents(db: Database, runId: number, opts: ListEventsOptions = {}): EventListing[] {
  const kinds = opts.kinds && opts.kinds.length > 0 ? opts.kinds : null;
  const rows = db.prepare(`
    SELECT t_s, t_ms, kind, severity, message, value, threshold, state, data_json FROM events
    WHERE run_id = ? ${kinds ? `AND kind IN (${kinds.map(() => '?').join(', ')})` : ''}
    ORDER BY t_s, id`).all(runId, ...(kinds ?? [])) as {
      t_s: number; t_ms: number; kind: string; severity: string; message: string; value: number | null;
      threshold: number | null; state: string | null; data_json: string | null;
    }[];
  return rows.map((r) => ({
    t: new Date(r.t_ms).toISOString(),
    t_s: r.t_s,
    kind: r.kind,
    severity: r.severity,
    message: r.message,
    value: r.value,
    threshold: r.threshold,
    state: r.state,
    data: r.data_json === null ? null : (JSON.parse(r.data_json) as Record<string, unknown>),
  }));
}

/** Number of a run's events, of one kind or all. */
export function countEvents(db: Database, runId: number, kind?: string): number {
  const st = prepared(db, statements);
  const r = (kind === undefined ? st.countAll.get(runId) : st.countKind.get(runId, kind)) as { n: number };
  return r.n;
}
