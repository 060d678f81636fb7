/**
 * The ReadStore (db/read-store.ts) over the lab archive on PostgreSQL: the
 * same answers as a station's SQLite store for the same data — same rows,
 * same order (names compared byte-wise, as SQLite does), same JSON — with
 * `run` the archive's own number and `uid`, `station`, `station_run` saying
 * where each run came from. Samples come in small batches of chunks, each
 * batch its own query (no server cursor held between them), decoded and
 * checked with the station's own code.
 */
import pg from 'pg';
import { WINDOW_FIELDS, type WindowResult } from '../../src/domain/window-result.js';
import { RuntimeError } from '../../src/domain/errors.js';
import type { ReadStore } from '../read-store.js';
import { toListing, toRecord, type ListingRow, type RecordRow, type RunFilter } from '../runs.js';
import type { EventListing } from '../events-store.js';
import type { FibreListing, FibreRun } from '../fibres.js';
import { readStoredChunk, type SampleChunk } from '../sample-reader.js';
import type { CheckedChunkRow } from '../codec.js';
import { NEVER_SYNCED, type ArchiveState } from '../archive-sync-state.js';
import { archiveLabel, clientConfig, explainArchiveError, type ConnectOptions } from './connect.js';
import { pgSchemaVersion, PG_SCHEMA_VERSION } from './migrations.js';

const FIELDS = WINDOW_FIELDS.filter((f) => f !== 'index');
const WINDOW_SELECT = `SELECT idx, ${FIELDS.map((f) => `"${f}"`).join(', ')} FROM windows WHERE run_id = $1 ORDER BY idx`;
const iso = (ms: number | null): string | null => (ms === null ? null : new Date(ms).toISOString());

const RUN_FROM = 'FROM runs r JOIN stations s ON s.id = r.station_id JOIN fibres f ON f.id = r.fibre_id';
const LISTING_COLUMNS = `r.id AS run, s.name AS station, f.name AS fibre, r.started_at_ms, r.ended_at_ms, r.samples,
  r.status, r.source, r.gaps, r.windows, r.uid, r.station_run`;

/** The ReadStore over a pool of connections to the archive (closing it ends the pool). */
export function postgresReadStore(pool: pg.Pool, label: string): ReadStore {
  const query = async <T extends pg.QueryResultRow>(text: string, values?: unknown[]): Promise<T[]> => {
    try {
      return (await pool.query<T>(text, values)).rows;
    } catch (e) {
      throw explainArchiveError(e, label);
    }
  };
  return {
    kind: 'postgres',
    label,
    async listRuns(f: RunFilter = {}) {
      const where: string[] = [];
      const v: unknown[] = [];
      const arg = (x: unknown) => `$${v.push(x)}`;
      if (f.fibre !== undefined) where.push(`f.name = ${arg(f.fibre)}`);
      if (f.station !== undefined) where.push(`s.name = ${arg(f.station)}`);
      if (f.until_ms !== undefined) where.push(`r.started_at_ms < ${arg(f.until_ms)}`);
      // a run spans [started_at, ended_at or now]: it matches when that span reaches since (as db/runs.ts listRuns)
      if (f.since_ms !== undefined) where.push(`COALESCE(r.ended_at_ms, GREATEST(${arg(Math.round(f.now_ms ?? Date.now()))}::bigint, r.started_at_ms)) >= ${arg(f.since_ms)}`);
      const rows = await query<ListingRow>(`SELECT ${LISTING_COLUMNS} ${RUN_FROM} ${where.length ? `WHERE ${where.join(' AND ')}` : ''}
        ORDER BY r.started_at_ms, r.id`, v);
      return rows.map(toListing);
    },
    async getRun(run) {
      const rows = await query<RecordRow>(`SELECT ${LISTING_COLUMNS}, r.source_path, r.clock, r.meta_json, s.config_json,
          f.material, f.diameter_m, f.length_m, f.width_m, f.thickness_m, r.events
        ${RUN_FROM} WHERE r.id = $1`, [run]);
      return rows.length ? toRecord(rows[0]) : undefined;
    },
    async listWindows(run) {
      const rows = await query<Record<string, unknown> & { idx: number }>(WINDOW_SELECT, [run]);
      // the same keys in the same order as the station's store gives them (db/windows-store.ts)
      return rows.map((r) => {
        const w = { index: r.idx } as Record<string, unknown>;
        for (const f of FIELDS) w[f] = r[f];
        return w as unknown as WindowResult;
      });
    },
    async listEvents(run, o = {}) {
      const kinds = o.kinds && o.kinds.length > 0 ? [...o.kinds] : null;
      const rows = await query<{ t_s: number; t_ms: number; kind: string; severity: string; message: string; value: number | null;
        threshold: number | null; state: string | null; data_json: string | null }>(`
        SELECT t_s, t_ms, kind, severity, message, value, threshold, state, data_json FROM events
        WHERE run_id = $1 ${kinds ? 'AND kind = ANY($2::text[])' : ''} ORDER BY t_s, station_event`, kinds ? [run, kinds] : [run]);
      return rows.map((r): EventListing => ({
        t: new Date(r.t_ms).toISOString(), t_s: r.t_s, kind: r.kind, severity: r.severity, message: r.message, value: r.value,
        threshold: r.threshold, state: r.state, data: r.data_json === null ? null : (JSON.parse(r.data_json) as Record<string, unknown>),
      }));
    },
    async countEvents(run, kind) {
      const rows = kind === undefined
        ? await query<{ n: number }>('SELECT count(*) AS n FROM events WHERE run_id = $1', [run])
        : await query<{ n: number }>('SELECT count(*) AS n FROM events WHERE run_id = $1 AND kind = $2', [run, kind]);
      return rows[0].n;
    },
    async listChannels(run) {
      return (await query<{ channel: string }>('SELECT DISTINCT channel COLLATE "C" AS channel FROM sample_chunks WHERE run_id = $1 ORDER BY 1', [run]))
        .map((r) => r.channel);
    },
    async *chunks(run, channel, o = {}) {
      const from = o.from_s ?? -Infinity;
      const to = o.to_s ?? Infinity;
      const batch = Math.max(1, Math.floor(o.batchChunks ?? 64));
      let after = -1;
      for (;;) {
        const rows = await query<CheckedChunkRow & { seq: number }>(`
          SELECT seq, count, t0_s, t1_s, time_kind, dt_s, time_blob, value_kind, value_base, value_blob, flags_blob, deflated, crc32
          FROM sample_chunks WHERE run_id = $1 AND channel = $2 AND seq > $3 AND t1_s >= $4 AND t0_s < $5
          ORDER BY seq LIMIT $6`, [run, channel, after, Math.max(from, -1e308), Math.min(to, 1e308), batch]);
        for (const row of rows) {
          const c: SampleChunk | undefined = readStoredChunk(row, run, channel, o);
          if (c) yield c;
        }
        if (rows.length < batch) return;
        after = rows[rows.length - 1].seq;
      }
    },
    async listFibres() {
      const rows = await query<Omit<FibreListing, 'first_run' | 'last_run'> & { first_ms: number | null; last_ms: number | null }>(`
        SELECT f.name, f.material, f.diameter_m, f.length_m, f.width_m, f.thickness_m,
               count(r.id)::int AS runs, min(r.started_at_ms) AS first_ms, max(r.started_at_ms) AS last_ms
        FROM fibres f LEFT JOIN runs r ON r.fibre_id = f.id
        GROUP BY f.id ORDER BY f.name COLLATE "C"`);
      return rows.map(({ first_ms, last_ms, ...f }) => ({ ...f, first_run: iso(first_ms), last_run: iso(last_ms) }));
    },
    async fibreRuns(name) {
      const rows = await query<Omit<FibreRun, 'station_config'> & { config_json: string | null }>(`
        SELECT r.id AS run, s.name AS station, r.uid, r.station_run, r.started_at_ms, r.ended_at_ms, r.status, r.samples, s.config_json
        ${RUN_FROM} WHERE f.name = $1 ORDER BY r.started_at_ms, r.id`, [name]);
      return rows.map(({ config_json, ...r }) => ({ ...r, station_config: config_json ? JSON.parse(config_json) : null }));
    },
    // every sync transaction takes a new change id for its run: the sum moves whatever the commit order
    changeToken: async () => (await query<{ t: number }>('SELECT COALESCE(sum(change_id), 0)::float8 AS t FROM runs'))[0].t,
    async archiveState(run): Promise<ArchiveState> {
      const rows = await query<{ status: string; synced_at_ms: number | null; synced_to_s: number | null }>(
        'SELECT status, synced_at_ms, synced_to_s FROM runs WHERE id = $1', [run]);
      const r = rows[0];
      if (!r || r.synced_at_ms === null) return NEVER_SYNCED;
      // here the lag is how long the archive has gone without news of a run its station was still recording
      const lag = r.status === 'recording' ? Math.max(0, (Date.now() - r.synced_at_ms) / 1000) : 0;
      return { archive_synced_at: new Date(r.synced_at_ms).toISOString(), archive_synced_to_s: r.synced_to_s, archive_lag_s: lag };
    },
    close: async () => {
      await pool.end().catch(() => {});
    },
  };
}

/**
 * Open the archive at `url` for reading: a small pool of connections, the
 * schema checked first (a database with no archive, or one of another
 * version, is refused with what to do).
 */
export async function openArchiveReadStore(url: string, opts: ConnectOptions & { maxConnections?: number } = {}): Promise<ReadStore> {
  const label = archiveLabel(url);
  const pool = new pg.Pool({ ...clientConfig(url, { applicationName: 'fibrewatch', ...opts }), max: opts.maxConnections ?? 4, idleTimeoutMillis: 10_000 });
  // a connection dropped while idle in the pool is discarded; the next query opens a fresh one
  pool.on('error', () => {});
  let v: number;
  try {
    const c = await pool.connect();
    try {
      v = await pgSchemaVersion(c);
    } finally {
      c.release();
    }
  } catch (e) {
    await pool.end().catch(() => {});
    throw explainArchiveError(e, label);
  }
  const refuse = async (why: string): Promise<never> => {
    await pool.end().catch(() => {});
    throw new RuntimeError(`archive ${label}: ${why}`);
  };
  if (v === 0) await refuse('no fibrewatch archive in this database yet (push a station into it: fibrewatch sync --db FILE --to URL)');
  if (v > PG_SCHEMA_VERSION) await refuse(`schema version ${v} is newer than this fibrewatch's (${PG_SCHEMA_VERSION}): upgrade fibrewatch`);
  if (v < PG_SCHEMA_VERSION) await refuse(`schema version ${v} is older than this fibrewatch's (${PG_SCHEMA_VERSION}): run \`fibrewatch sync --init --to URL\` as the archive's owner`);
  return postgresReadStore(pool, label);
}
