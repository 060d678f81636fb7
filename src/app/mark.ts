/**
 * `fibrewatch mark`: note a configuration change by hand as a `mark` event of
 * a run — while it records (the store is in WAL mode: the mark is one short
 * write transaction beside the recorder's commits) or after the fact with a
 * time. `compare` cuts the run at every mark (src/summaries/configurations.ts).
 */
import type { Database } from 'better-sqlite3';
import { getRun } from '../../db/runs.js';
import { insertEvents } from '../../db/events-store.js';
import { RuntimeError, UsageError } from '../domain/errors.js';

/** Longest label accepted, characters. */
export const MARK_LABEL_MAX = 200;

/** A stored mark. */
export interface StoredMark {
  run: number;
  label: string;
  /** seconds since the run's start, and the instant in ISO 8601 UTC */
  t_s: number;
  t: string;
}

/**
 * Store a mark at `at_ms` (UTC ms; default now). Refused (UsageError) for an
 * empty or over-long label, a time before the run started, or after it ended;
 * RuntimeError for an unknown run.
 */
export function storeMark(db: Database, runId: number, rawLabel: string, at_ms?: number, now_ms = Date.now()): StoredMark {
  const label = rawLabel.trim();
  if (!label) throw new UsageError('LABEL: must not be empty (name the configuration, e.g. "near" or "masses out")');
  if (label.length > MARK_LABEL_MAX) throw new UsageError(`LABEL: at most ${MARK_LABEL_MAX} characters (got ${label.length})`);
  const run = getRun(db, runId);
  if (!run) throw new RuntimeError(`run ${runId}: no such run in this store`);
  const t_ms = at_ms ?? now_ms;
  const iso = (ms: number) => new Date(ms).toISOString();
  if (t_ms < run.started_at_ms) throw new UsageError(`--at: ${iso(t_ms)} is before run ${runId} started (${iso(run.started_at_ms)})`);
  // a tolerance of a second: the run's end is its last sample, a mark made as it stops may fall just after
  if (run.ended_at_ms !== null && t_ms > run.ended_at_ms + 1000) {
    throw new UsageError(at_ms === undefined
      ? `run ${runId} ended at ${iso(run.ended_at_ms)}: give --at with the time of the change`
      : `--at: ${iso(t_ms)} is after run ${runId} ended (${iso(run.ended_at_ms)})`);
  }
  const t_s = (t_ms - run.started_at_ms) / 1000;
  insertEvents(db, runId, [{ t_s, t_ms, kind: 'mark', severity: 'info', message: `mark: ${label}`, data: { label } }]);
  return { run: runId, label, t_s, t: iso(t_ms) };
}
