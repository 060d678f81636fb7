/**
 * What a station's store knows of its runs in the lab archive: the last sync
 * of each run (written by `sync` and `record --archive`), and from it how far
 * the archive is behind. Informational only — a sync decides what to send from
 * the archive's own contents, never from this table.
 */
import type { Database } from 'better-sqlite3';
import { prepared } from './statements.js';

/** A run's standing in the archive, as `show --json` gives it (all null: never synced). */
export interface ArchiveState {
  /** ISO 8601 UTC time of the last sync that brought the run up to date */
  archive_synced_at: string | null;
  /** t_s of the last sample the archive holds of the run */
  archive_synced_to_s: number | null;
  /** seconds of data the archive is behind the station for this run (0: caught up) */
  archive_lag_s: number | null;
}

/** One run brought up to date in an archive. */
export interface ArchiveSyncNote {
  run: number;
  /** the archive's URL without its password */
  archive: string;
  archive_run: number;
  synced_at_ms: number;
  synced_to_s: number | null;
}

export const NEVER_SYNCED: ArchiveState = { archive_synced_at: null, archive_synced_to_s: null, archive_lag_s: null };

// reading and writing apart: a read-only connection prepares only what it reads
const writeStatements = (db: Database) => ({
  note: db.prepare(`INSERT INTO archive_sync (run_id, archive, archive_run, synced_at_ms, synced_to_s) VALUES (?, ?, ?, ?, ?)
                    ON CONFLICT (run_id) DO UPDATE SET archive = excluded.archive, archive_run = excluded.archive_run,
                      synced_at_ms = excluded.synced_at_ms, synced_to_s = excluded.synced_to_s`),
});
const readStatements = (db: Database) => ({
  get: db.prepare(`SELECT a.synced_at_ms, a.synced_to_s, (SELECT MAX(t1_s) FROM sample_chunks c WHERE c.run_id = a.run_id) AS last_s
                   FROM archive_sync a WHERE a.run_id = ?`),
});

/** Store the notes of a sync pass in one small transaction. */
export function noteArchiveSync(db: Database, notes: readonly ArchiveSyncNote[]): void {
  if (!notes.length) return;
  const st = prepared(db, writeStatements);
  db.transaction(() => {
    for (const n of notes) st.note.run(n.run, n.archive, n.archive_run, Math.round(n.synced_at_ms), n.synced_to_s);
  })();
}

/** A run's standing in the archive: the lag is the station's last stored sample minus the archive's. */
export function archiveStateOf(db: Database, runId: number): ArchiveState {
  const r = prepared(db, readStatements).get.get(runId) as { synced_at_ms: number; synced_to_s: number | null; last_s: number | null } | undefined;
  if (!r) return NEVER_SYNCED;
  const lag = r.last_s === null ? 0 : Math.max(0, r.last_s - (r.synced_to_s ?? 0));
  return { archive_synced_at: new Date(r.synced_at_ms).toISOString(), archive_synced_to_s: r.synced_to_s, archive_lag_s: lag };
}
