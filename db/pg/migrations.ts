/**
 * The lab archive's schema in PostgreSQL, as numbered migrations (as for a
 * station's SQLite store, db/migrations.ts). The archive's version is the
 * highest row of `fibrewatch_schema`; each step runs in its own transaction
 * under an advisory lock, so two stations that find an empty archive at the
 * same moment cannot both create it. Never edit a released step: add one.
 *
 * Samples are the station's chunks byte for byte (db/codec.ts encoding, with
 * its CRC-32), so the archive decodes and verifies them exactly as a station
 * does. Window columns keep their mixed-case names quoted.
 */
import type pg from 'pg';

/** One step of the archive's schema. */
export interface PgMigration {
  version: number;
  description: string;
  sql: string;
}

/** Every step, in order. */
export const PG_MIGRATIONS: readonly PgMigration[] = [
  {
    version: 1,
    description: 'stations, fibres, runs (uid, station and the archive\'s own number), chunked samples, windows, events',
    sql: `
      CREATE TABLE stations (
        id            serial PRIMARY KEY,
        name          text NOT NULL UNIQUE,
        config_json   text,                        -- the station file as last synced
        updated_at_ms bigint NOT NULL
      );
      CREATE TABLE fibres (
        id          serial PRIMARY KEY,
        name        text NOT NULL UNIQUE,
        material    text,
        diameter_m  double precision,
        length_m    double precision,
        width_m     double precision,
        thickness_m double precision
      );
      CREATE TABLE runs (
        id             serial PRIMARY KEY,         -- the archive's run number
        uid            text NOT NULL UNIQUE,       -- made by the station when the run began
        station_id     integer NOT NULL REFERENCES stations(id),
        fibre_id       integer NOT NULL REFERENCES fibres(id),
        station_run    integer NOT NULL,           -- the run's number in its station's store
        started_at_ms  bigint NOT NULL,
        ended_at_ms    bigint,
        status         text NOT NULL CHECK (status IN ('recording', 'complete', 'interrupted')),
        source         text NOT NULL CHECK (source IN ('device', 'file', 'simulator')),
        source_path    text,
        clock          text NOT NULL CHECK (clock IN ('device', 'host')),
        time_origin_s  double precision,
        samples        bigint NOT NULL DEFAULT 0,
        gaps           integer NOT NULL DEFAULT 0,
        windows        integer NOT NULL DEFAULT 0,
        events         integer NOT NULL DEFAULT 0,
        meta_json      text,
        station_digest text,                       -- the station's account of the run at the last complete sync
        synced_at_ms   bigint,                     -- UTC ms of that sync
        synced_to_s    double precision,           -- t_s of the last sample held here
        change_id      bigint NOT NULL DEFAULT 0   -- from run_changes at every sync transaction
      );
      CREATE INDEX runs_by_fibre   ON runs (fibre_id, started_at_ms);
      CREATE INDEX runs_by_station ON runs (station_id, started_at_ms);
      CREATE INDEX runs_by_start   ON runs (started_at_ms);
      CREATE SEQUENCE run_changes;

      CREATE TABLE sample_chunks (
        run_id     integer NOT NULL REFERENCES runs(id) ON DELETE CASCADE,
        channel    text NOT NULL,
        seq        integer NOT NULL,
        t0_s       double precision NOT NULL,
        t1_s       double precision NOT NULL,
        count      integer NOT NULL,
        time_kind  text NOT NULL,
        dt_s       double precision,
        time_blob  bytea,
        value_kind text NOT NULL,
        value_base double precision,
        value_blob bytea NOT NULL,
        flags_blob bytea,
        deflated   integer NOT NULL,
        crc32      bigint,
        PRIMARY KEY (run_id, channel, seq)
      );
      -- the blobs are compressed or noise already: store them out of line without another compression pass
      ALTER TABLE sample_chunks ALTER COLUMN time_blob SET STORAGE EXTERNAL;
      ALTER TABLE sample_chunks ALTER COLUMN value_blob SET STORAGE EXTERNAL;
      ALTER TABLE sample_chunks ALTER COLUMN flags_blob SET STORAGE EXTERNAL;

      CREATE TABLE windows (
        run_id                   integer NOT NULL REFERENCES runs(id) ON DELETE CASCADE,
        idx                      integer NOT NULL,
        t_start_s                double precision NOT NULL,
        t_mid_s                  double precision NOT NULL,
        t_end_s                  double precision NOT NULL,
        samples                  integer NOT NULL,
        status                   text NOT NULL,
        period_s                 double precision,
        period_sigma_s           double precision,
        decay_time_s             double precision,
        decay_time_sigma_s       double precision,
        decay_rate_per_s         double precision,
        decay_rate_sigma_per_s   double precision,
        q                        double precision,
        q_sigma                  double precision,
        amplitude_rad            double precision,
        amplitude_sigma_rad      double precision,
        equilibrium_rad          double precision,
        equilibrium_sigma_rad    double precision,
        drift_rad_per_s          double precision,
        drift_sigma_rad_per_s    double precision,
        phase_rad                double precision,
        residual_rms_rad         double precision,
        chi2_red                 double precision,
        "kappa_Nm_per_rad"       double precision,
        "kappa_sigma_Nm_per_rad" double precision,
        "shear_modulus_Pa"       double precision,
        "shear_modulus_sigma_Pa" double precision,
        "temp_C"                 double precision,
        PRIMARY KEY (run_id, idx)
      );

      CREATE TABLE events (
        run_id        integer NOT NULL REFERENCES runs(id) ON DELETE CASCADE,
        station_event bigint NOT NULL,             -- the event's id in its station's store
        t_s           double precision NOT NULL,
        t_ms          bigint NOT NULL,
        kind          text NOT NULL,
        severity      text NOT NULL,
        message       text NOT NULL,
        value         double precision,
        threshold     double precision,
        state         text,
        data_json     text,
        PRIMARY KEY (run_id, station_event)
      );
      CREATE INDEX events_by_run ON events (run_id, t_s);
    `,
  },
];

/** The archive schema this code reads and writes. */
export const PG_SCHEMA_VERSION = PG_MIGRATIONS[PG_MIGRATIONS.length - 1].version;

/** An arbitrary constant of ours: the advisory lock that serialises migrations. */
const MIGRATION_LOCK = 0x66774d31;

/** The archive's schema version; 0 when the database holds no fibrewatch archive yet. */
export async function pgSchemaVersion(client: pg.ClientBase): Promise<number> {
  const t = await client.query<{ t: string | null }>("SELECT to_regclass('fibrewatch_schema')::text AS t");
  if (t.rows[0].t === null) return 0;
  const v = await client.query<{ v: number | null }>('SELECT max(version) AS v FROM fibrewatch_schema');
  return v.rows[0].v ?? 0;
}

/**
 * Bring the archive up to the latest schema, one transaction per step; returns
 * the versions applied. Throws when the archive is newer than this code.
 */
export async function migrateArchive(client: pg.ClientBase): Promise<number[]> {
  const applied: number[] = [];
  for (const m of PG_MIGRATIONS) {
    await client.query('BEGIN');
    try {
      await client.query('SELECT pg_advisory_xact_lock($1)', [MIGRATION_LOCK]);
      await client.query(`CREATE TABLE IF NOT EXISTS fibrewatch_schema (
        version integer PRIMARY KEY, description text NOT NULL, applied_at timestamptz NOT NULL DEFAULT now())`);
      const v = await pgSchemaVersion(client);
      if (v > PG_SCHEMA_VERSION) throw new Error(`the archive has schema version ${v}, newer than this fibrewatch's (${PG_SCHEMA_VERSION}): upgrade fibrewatch`);
      if (m.version > v) {
        await client.query(m.sql);
        await client.query('INSERT INTO fibrewatch_schema (version, description) VALUES ($1, $2)', [m.version, m.description]);
        applied.push(m.version);
      }
      await client.query('COMMIT');
    } catch (e) {
      await client.query('ROLLBACK').catch(() => {});
      throw e;
    }
  }
  return applied;
}
