/**
 * The writing side of the lab archive: what a sync (src/app/sync.ts) does to
 * PostgreSQL, one statement kind per method, on one connection of its own.
 *
 * What the archive holds of a run *is* its high-water mark: the last chunk of
 * each channel, the last window index, the last station event id. They are
 * read under a row lock on the run at the start of each transaction and move
 * only when that transaction commits the rows themselves, so a sync cut off at
 * any moment (kill -9, a dropped connection, the server stopping) leaves the
 * archive exact, and the next sync carries on from there. New rows go in by
 * binary COPY; only a run's last chunk, which the station rewrites while it
 * grows, is upserted.
 */
import { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import type pg from 'pg';
import { from as copyFrom } from 'pg-copy-streams';
import { RuntimeError } from '../../src/domain/errors.js';
import type { FibreRow, StationRow, StationRun, StoredChunkRow, StoredEventRow, StoredWindowRow } from '../sync-source.js';
import { STORED_WINDOW_COLUMNS } from '../sync-source.js';
import { CopyBinaryWriter, type PgBinaryType } from './copy-binary.js';
import { archiveLabel, connectArchive, explainArchiveError, type ConnectOptions } from './connect.js';
import { migrateArchive, pgSchemaVersion, PG_SCHEMA_VERSION } from './migrations.js';

/** What the archive holds of a run, read at the start of a sync transaction. */
export interface ArchiveMarks {
  started_at_ms: number;
  /** per channel: the last chunk held */
  chunks: Map<string, { seq: number; count: number; t1_s: number; crc32: number | null }>;
  /** last window index held, −1 for none */
  max_window: number;
  /** last station event id held, 0 for none */
  max_event: number;
}

/** A run the archive already has: its number and the station's account at its last complete sync. */
export interface KnownRun {
  id: number;
  digest: string | null;
}

/** Quoted column names (mixed-case window fields keep their case in PostgreSQL). */
const q = (c: string): string => `"${c}"`;

const CHUNK_COLUMNS = ['run_id', 'channel', 'seq', 't0_s', 't1_s', 'count', 'time_kind', 'dt_s', 'time_blob', 'value_kind', 'value_base',
  'value_blob', 'flags_blob', 'deflated', 'crc32'] as const;
const CHUNK_TYPES: PgBinaryType[] = ['int4', 'text', 'int4', 'float8', 'float8', 'int4', 'text', 'float8', 'bytea', 'text', 'float8',
  'bytea', 'bytea', 'int4', 'int8'];
const WINDOW_TYPES: PgBinaryType[] = ['int4', ...STORED_WINDOW_COLUMNS.map((c): PgBinaryType => (c === 'idx' || c === 'samples' ? 'int4' : c === 'status' ? 'text' : 'float8'))];
const EVENT_COLUMNS = ['run_id', 'station_event', 't_s', 't_ms', 'kind', 'severity', 'message', 'value', 'threshold', 'state', 'data_json'] as const;
const EVENT_TYPES: PgBinaryType[] = ['int4', 'int8', 'float8', 'int8', 'text', 'text', 'text', 'float8', 'float8', 'text', 'text'];

export interface OpenArchiveWriterOptions extends ConnectOptions {
  /** create or upgrade the archive's tables when they are missing or older (needs the owner's rights); default true */
  migrate?: boolean;
}

/** One connection to the archive for writing. */
export class ArchiveWriter {
  private constructor(private readonly client: pg.Client, readonly label: string) {}

  /** Connect, and bring the schema up to date (or refuse a newer one). */
  static async open(url: string, opts: OpenArchiveWriterOptions = {}): Promise<ArchiveWriter> {
    const label = archiveLabel(url);
    const client = await connectArchive(url, { applicationName: 'fibrewatch sync', ...opts });
    const w = new ArchiveWriter(client, label);
    try {
      const v = await pgSchemaVersion(client);
      if (v > PG_SCHEMA_VERSION) throw new RuntimeError(`archive ${label}: schema version ${v} is newer than this fibrewatch's (${PG_SCHEMA_VERSION}): upgrade fibrewatch`);
      if (v < PG_SCHEMA_VERSION) {
        if (opts.migrate === false) throw new RuntimeError(`archive ${label}: schema version ${v}, this fibrewatch writes ${PG_SCHEMA_VERSION}: run \`fibrewatch sync --init --to URL\` as the archive's owner`);
        await w.migrate(v);
      }
    } catch (e) {
      await w.close();
      throw explainArchiveError(e, label);
    }
    return w;
  }

  private async migrate(from: number): Promise<number[]> {
    try {
      return await migrateArchive(this.client);
    } catch (e) {
      if ((e as { code?: string }).code === '42501') {
        throw new RuntimeError(`archive ${this.label}: ${from === 0 ? 'holds no fibrewatch archive yet' : `has schema version ${from} (this fibrewatch writes ${PG_SCHEMA_VERSION})`}, `
          + 'and this role may not create tables: run `fibrewatch sync --init --to URL` once as the archive\'s owner (docs/archive.md)');
      }
      throw e;
    }
  }

  /** The schema version now (after open: PG_SCHEMA_VERSION). */
  async schemaVersion(): Promise<number> {
    return this.run(() => pgSchemaVersion(this.client));
  }

  private async run<T>(fn: () => Promise<T>): Promise<T> {
    try {
      return await fn();
    } catch (e) {
      throw explainArchiveError(e, this.label);
    }
  }

  /** Runs the archive has among `uids`. */
  async knownRuns(uids: readonly string[]): Promise<Map<string, KnownRun>> {
    return this.run(async () => {
      const r = await this.client.query<{ uid: string; id: number; station_digest: string | null }>(
        'SELECT uid, id, station_digest FROM runs WHERE uid = ANY($1::text[])', [uids]);
      return new Map(r.rows.map((x) => [x.uid, { id: x.id, digest: x.station_digest }]));
    });
  }

  /**
   * Stations and fibres of a store. A station's file is taken when it is at
   * least as recent as the archive's; a fibre's geometry as in a station's
   * store, known values replacing unknown ones. Rows that would not change are
   * not written.
   */
  async putStationsAndFibres(stations: readonly StationRow[], fibres: readonly FibreRow[]): Promise<void> {
    await this.run(async () => {
      if (stations.length) {
        await this.client.query(`
          INSERT INTO stations (name, config_json, updated_at_ms)
          SELECT * FROM unnest($1::text[], $2::text[], $3::bigint[])
          ON CONFLICT (name) DO UPDATE SET config_json = COALESCE(excluded.config_json, stations.config_json), updated_at_ms = excluded.updated_at_ms
          WHERE excluded.updated_at_ms >= stations.updated_at_ms
            AND (stations.config_json IS DISTINCT FROM COALESCE(excluded.config_json, stations.config_json) OR excluded.updated_at_ms > stations.updated_at_ms)`,
        [stations.map((s) => s.name), stations.map((s) => s.config_json), stations.map((s) => s.updated_at)]);
      }
      if (fibres.length) {
        const col = (k: keyof FibreRow) => fibres.map((f) => f[k]);
        await this.client.query(`
          INSERT INTO fibres (name, material, diameter_m, length_m, width_m, thickness_m)
          SELECT * FROM unnest($1::text[], $2::text[], $3::float8[], $4::float8[], $5::float8[], $6::float8[])
          ON CONFLICT (name) DO UPDATE SET
            material = COALESCE(excluded.material, fibres.material), diameter_m = COALESCE(excluded.diameter_m, fibres.diameter_m),
            length_m = COALESCE(excluded.length_m, fibres.length_m), width_m = COALESCE(excluded.width_m, fibres.width_m),
            thickness_m = COALESCE(excluded.thickness_m, fibres.thickness_m)
          WHERE (fibres.material, fibres.diameter_m, fibres.length_m, fibres.width_m, fibres.thickness_m) IS DISTINCT FROM
                (COALESCE(excluded.material, fibres.material), COALESCE(excluded.diameter_m, fibres.diameter_m), COALESCE(excluded.length_m, fibres.length_m),
                 COALESCE(excluded.width_m, fibres.width_m), COALESCE(excluded.thickness_m, fibres.thickness_m))`,
        [col('name'), col('material'), col('diameter_m'), col('length_m'), col('width_m'), col('thickness_m')]);
      }
    });
  }

  /** The archive's number for a station run, creating the run (empty, as the station first described it) if new. */
  async ensureRun(r: StationRun): Promise<number> {
    return this.run(async () => {
      const ins = await this.client.query<{ id: number }>(`
        INSERT INTO runs (uid, station_id, fibre_id, station_run, started_at_ms, ended_at_ms, status, source, source_path, clock, time_origin_s, meta_json)
        VALUES ($1, (SELECT id FROM stations WHERE name = $2), (SELECT id FROM fibres WHERE name = $3), $4, $5, $6, $7, $8, $9, $10, $11, $12)
        ON CONFLICT (uid) DO NOTHING RETURNING id`,
      [r.uid, r.station, r.fibre, r.id, r.started_at_ms, r.ended_at_ms, r.status, r.source, r.source_path, r.clock, r.time_origin_s, r.meta_json]);
      if (ins.rows.length) return ins.rows[0].id;
      return (await this.client.query<{ id: number }>('SELECT id FROM runs WHERE uid = $1', [r.uid])).rows[0].id;
    });
  }

  /** `fn` in one transaction: committed when it returns, rolled back when it throws (or the connection drops). */
  async transaction<T>(fn: () => Promise<T>): Promise<T> {
    await this.run(() => this.client.query('BEGIN'));
    let out: T;
    try {
      out = await fn();
    } catch (e) {
      await this.client.query('ROLLBACK').catch(() => {});
      throw explainArchiveError(e, this.label);
    }
    await this.run(() => this.client.query('COMMIT'));
    return out;
  }

  /** Lock a run for this transaction and read what the archive holds of it. */
  async lockRun(id: number): Promise<ArchiveMarks> {
    return this.run(async () => {
      const run = await this.client.query<{ started_at_ms: number }>('SELECT started_at_ms FROM runs WHERE id = $1 FOR UPDATE', [id]);
      if (!run.rows.length) throw new RuntimeError(`archive ${this.label}: run ${id} is gone from the archive`);
      const chunks = await this.client.query<{ channel: string; seq: number; count: number; t1_s: number; crc32: number | null }>(
        'SELECT DISTINCT ON (channel) channel, seq, count, t1_s, crc32 FROM sample_chunks WHERE run_id = $1 ORDER BY channel, seq DESC', [id]);
      const w = await this.client.query<{ m: number }>('SELECT COALESCE(max(idx), -1) AS m FROM windows WHERE run_id = $1', [id]);
      const e = await this.client.query<{ m: number }>('SELECT COALESCE(max(station_event), 0) AS m FROM events WHERE run_id = $1', [id]);
      return {
        started_at_ms: run.rows[0].started_at_ms,
        chunks: new Map(chunks.rows.map((c) => [c.channel, { seq: c.seq, count: c.count, t1_s: c.t1_s, crc32: c.crc32 }])),
        max_window: w.rows[0].m,
        max_event: e.rows[0].m,
      };
    });
  }

  /**
   * The station moved the run's start (its first block dated the run, or an
   * import was re-dated): its events' UTC stamps moved with it, so the ones
   * held here move by the same integer milliseconds.
   */
  async moveStart(id: number, from_ms: number, to_ms: number): Promise<void> {
    await this.run(async () => {
      await this.client.query('UPDATE events SET t_ms = t_ms + $2 WHERE run_id = $1', [id, to_ms - from_ms]);
      await this.client.query('UPDATE runs SET started_at_ms = $2 WHERE id = $1', [id, to_ms]);
    });
  }

  /** Replace chunks the archive holds in an older state (the run's last chunk, grown since). */
  async upsertChunks(id: number, rows: readonly StoredChunkRow[]): Promise<void> {
    if (!rows.length) return;
    await this.run(async () => {
      for (const c of rows) {
        await this.client.query(`
          INSERT INTO sample_chunks (${CHUNK_COLUMNS.join(', ')}) VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12, $13, $14, $15)
          ON CONFLICT (run_id, channel, seq) DO UPDATE SET
            t0_s = excluded.t0_s, t1_s = excluded.t1_s, count = excluded.count, time_kind = excluded.time_kind, dt_s = excluded.dt_s,
            time_blob = excluded.time_blob, value_kind = excluded.value_kind, value_base = excluded.value_base,
            value_blob = excluded.value_blob, flags_blob = excluded.flags_blob, deflated = excluded.deflated, crc32 = excluded.crc32`,
        [id, c.channel, c.seq, c.t0_s, c.t1_s, c.count, c.time_kind, c.dt_s, c.time_blob, c.value_kind, c.value_base, c.value_blob, c.flags_blob, c.deflated, c.crc32]);
      }
    });
  }

  private async copy(table: string, columns: readonly string[], types: PgBinaryType[], rows: Iterable<readonly unknown[]>): Promise<void> {
    const w = new CopyBinaryWriter(types);
    async function* parts(): AsyncGenerator<Buffer> {
      for (const r of rows) {
        w.row(r);
        yield* w.take();
      }
      yield* w.finish();
    }
    await this.run(() => pipeline(Readable.from(parts()), this.client.query(copyFrom(`COPY ${table} (${columns.join(', ')}) FROM STDIN (FORMAT binary)`))));
  }

  /** New chunks (past the archive's last chunk of their channel), by COPY. */
  async copyChunks(id: number, rows: readonly StoredChunkRow[]): Promise<void> {
    if (!rows.length) return;
    await this.copy('sample_chunks', CHUNK_COLUMNS, CHUNK_TYPES, rows.map((c) => [id, c.channel, c.seq, c.t0_s, c.t1_s, c.count, c.time_kind,
      c.dt_s, c.time_blob, c.value_kind, c.value_base, c.value_blob, c.flags_blob, c.deflated, c.crc32]));
  }

  /** New windows (past the archive's last index), by COPY. */
  async copyWindows(id: number, rows: readonly StoredWindowRow[]): Promise<void> {
    if (!rows.length) return;
    await this.copy('windows', ['run_id', ...STORED_WINDOW_COLUMNS.map(q)], WINDOW_TYPES, rows.map((w) => [id, ...STORED_WINDOW_COLUMNS.map((c) => w[c])]));
  }

  /** New events (past the archive's last station event id), by COPY. */
  async copyEvents(id: number, rows: readonly StoredEventRow[]): Promise<void> {
    if (!rows.length) return;
    await this.copy('events', EVENT_COLUMNS, EVENT_TYPES, rows.map((e) => [id, e.id, e.t_s, e.t_ms, e.kind, e.severity, e.message, e.value,
      e.threshold, e.state, e.data_json]));
  }

  /**
   * End a transaction's work on a run: its counts from what the archive now
   * holds and a new change id; when the transaction brought the run fully up
   * to date (`final`), also the station's account of the run and the time of
   * the sync. Returns the t_s of the last sample held.
   */
  async settleRun(id: number, final?: { run: StationRun; digest: string; synced_at_ms: number }): Promise<{ synced_to_s: number | null }> {
    return this.run(async () => {
      const counts = `
        windows = (SELECT count(*) FROM windows WHERE run_id = $1),
        events = (SELECT count(*) FROM events WHERE run_id = $1),
        synced_to_s = (SELECT max(t1_s) FROM sample_chunks WHERE run_id = $1),
        change_id = nextval('run_changes')`;
      const r = final
        ? await this.client.query<{ synced_to_s: number | null }>(`
            UPDATE runs SET ${counts}, ended_at_ms = $2, status = $3, source_path = $4, clock = $5, time_origin_s = $6, samples = $7, gaps = $8,
              meta_json = $9, station_digest = $10, synced_at_ms = $11
            WHERE id = $1 RETURNING synced_to_s`,
          [id, final.run.ended_at_ms, final.run.status, final.run.source_path, final.run.clock, final.run.time_origin_s, final.run.samples,
            final.run.gaps, final.run.meta_json, final.digest, Math.round(final.synced_at_ms)])
        : await this.client.query<{ synced_to_s: number | null }>(`
            UPDATE runs SET ${counts},
              samples = (SELECT COALESCE(sum(count), 0) FROM sample_chunks WHERE run_id = $1
                         AND channel = (SELECT min(channel) FROM sample_chunks WHERE run_id = $1)),
              gaps = (SELECT count(*) FROM events WHERE run_id = $1 AND kind = 'gap')
            WHERE id = $1 RETURNING synced_to_s`, [id]);
      return { synced_to_s: r.rows[0].synced_to_s };
    });
  }

  /** Close the connection (never throws). */
  async close(): Promise<void> {
    await this.client.end().catch(() => {});
  }
}
