/**
 * Verifying a whole store: SQLite's own integrity and foreign-key checks, then
 * every sample chunk against its CRC-32 and every channel's sample count
 * against its run's. Reads only, in short batches, so it runs beside a recorder.
 */
import type { Database } from 'better-sqlite3';
import { inspectChunk, type CheckedChunkRow } from './codec.js';
import { describeChunkProblem } from './sample-reader.js';

/** One thing found wrong; `message` is one line for people. */
export interface StoreProblem {
  /** `integrity`: SQLite's integrity_check; `foreign-key`: a row pointing at nothing; `checksum` / `undecodable`: a sample chunk; `sample-count`: a channel holds other than its run's count */
  kind: 'integrity' | 'foreign-key' | 'checksum' | 'undecodable' | 'sample-count';
  run: number | null;
  channel: string | null;
  seq: number | null;
  t0_s: number | null;
  t1_s: number | null;
  samples: number | null;
  message: string;
}

/** What checkStore looked at and found. */
export interface StoreCheck {
  /** true when SQLite's integrity_check said "ok" */
  integrity_ok: boolean;
  runs: number;
  chunks: number;
  /** chunks whose CRC-32 matched */
  chunks_verified: number;
  /** chunks written before checksums (schema < 3): decoded, not verifiable */
  chunks_unverified: number;
  chunks_corrupt: number;
  /** samples in chunks that were read back intact */
  samples_checked: number;
  problems: StoreProblem[];
}

export interface CheckStoreOptions {
  /** check only this run's chunks (SQLite's checks still cover the whole file) */
  runId?: number;
  /** chunk rows per query; default 64 */
  batchChunks?: number;
  /** called with each problem as it is found (a long check shows them at once) */
  onProblem?: (p: StoreProblem) => void;
}

const none = { run: null, channel: null, seq: null, t0_s: null, t1_s: null, samples: null } as const;

/** Check the store (or one run of it); problems are both returned and handed to onProblem as found. */
export function checkStore(db: Database, opts: CheckStoreOptions = {}): StoreCheck {
  const out: StoreCheck = { integrity_ok: false, runs: 0, chunks: 0, chunks_verified: 0, chunks_unverified: 0, chunks_corrupt: 0, samples_checked: 0, problems: [] };
  const report = (p: StoreProblem) => {
    out.problems.push(p);
    opts.onProblem?.(p);
  };
  const batch = Math.max(1, Math.floor(opts.batchChunks ?? 64));

  try {
    const rows = db.pragma('integrity_check') as { integrity_check: string }[];
    out.integrity_ok = rows.length === 1 && rows[0].integrity_check === 'ok';
    // SQLite's own lines ("*** in database main ***\nPage 7: …") joined into one per finding
    if (!out.integrity_ok) for (const r of rows) report({ kind: 'integrity', ...none, message: `SQLite integrity check: ${r.integrity_check.replace(/\s*\n\s*/g, '; ')}` });
  } catch (e) {
    report({ kind: 'integrity', ...none, message: `SQLite integrity check failed: ${(e as Error).message}` });
  }
  try {
    for (const r of db.pragma('foreign_key_check') as { table: string; rowid: number; parent: string }[]) {
      report({ kind: 'foreign-key', ...none, message: `${r.table} row ${r.rowid} refers to a missing ${r.parent} row` });
    }
  } catch (e) {
    report({ kind: 'foreign-key', ...none, message: `SQLite foreign-key check failed: ${(e as Error).message}` });
  }

  const runs = (opts.runId === undefined
    ? db.prepare('SELECT id, samples FROM runs ORDER BY id').all()
    : db.prepare('SELECT id, samples FROM runs WHERE id = ?').all(opts.runId)) as { id: number; samples: number }[];
  const channels = db.prepare('SELECT DISTINCT channel FROM sample_chunks WHERE run_id = ? ORDER BY channel');
  const chunks = db.prepare(`
    SELECT seq, count, t0_s, t1_s, time_kind, dt_s, time_blob, value_kind, value_base, value_blob, flags_blob, deflated, crc32
    FROM sample_chunks WHERE run_id = ? AND channel = ? AND seq > ? ORDER BY seq LIMIT ?`);
  for (const run of runs) {
    out.runs++;
    let names: string[];
    try {
      names = (channels.all(run.id) as { channel: string }[]).map((r) => r.channel);
    } catch (e) {
      report({ kind: 'integrity', ...none, run: run.id, message: `run ${run.id}: its chunks cannot be listed: ${(e as Error).message}` });
      continue;
    }
    if (names.length === 0 && run.samples > 0) {
      report({ kind: 'sample-count', ...none, run: run.id, samples: 0, message: `run ${run.id}: no sample chunks, the run records ${run.samples} samples` });
    }
    for (const channel of names) {
      let after = -1;
      let held = 0;
      let corrupt = false;
      try {
        for (;;) {
          const rows = chunks.all(run.id, channel, after, batch) as (CheckedChunkRow & { seq: number })[];
          for (const row of rows) {
            out.chunks++;
            held += row.count;
            const got = inspectChunk(row);
            if (got.state === 'corrupt') {
              out.chunks_corrupt++;
              corrupt = true;
              const p = { run: run.id, channel, seq: row.seq, t0_s: row.t0_s, t1_s: row.t1_s, count: row.count, problem: got.problem, detail: got.detail, masked: 0 };
              report({ kind: got.problem, run: run.id, channel, seq: row.seq, t0_s: row.t0_s, t1_s: row.t1_s, samples: row.count, message: describeChunkProblem(p) });
            } else {
              if (got.state === 'verified') out.chunks_verified++;
              else out.chunks_unverified++;
              out.samples_checked += got.chunk.t.length;
            }
          }
          if (rows.length < batch) break;
          after = rows[rows.length - 1].seq;
        }
      } catch (e) {
        corrupt = true;
        const which = after < 0 ? 'its chunks' : `its chunks after chunk ${after}`;
        report({ kind: 'integrity', ...none, run: run.id, channel, message: `run ${run.id}, channel ${channel}: ${which} cannot be read: ${(e as Error).message}` });
      }
      // a corrupt row's own count is not to be trusted, so the sum is only compared when every row was sound
      if (!corrupt && held !== run.samples) {
        report({ kind: 'sample-count', ...none, run: run.id, channel, samples: held, message: `run ${run.id}, channel ${channel}: its chunks hold ${held} samples, the run records ${run.samples}` });
      }
    }
  }
  return out;
}
