/**
 * Numbered schema migrations. The store's schema version is `PRAGMA user_version`;
 * each migration runs in its own transaction, so a failed upgrade leaves the file
 * at the last good version. Never edit a released migration: add a new one.
 */
import type { Database } from 'better-sqlite3';
import { legacyRunUid } from './run-uid.js';

/** One schema step: `up` takes the store from `version - 1` to `version`. */
export interface Migration {
  version: number;
  description: string;
  up(db: Database): void;
}

/** Every migration, in order; the last one's version is the schema this code writes. */
export const MIGRATIONS: readonly Migration[] = [
  {
    version: 1,
    description: 'stations, fibres, runs, chunked samples, events',
    up(db) {
      db.exec(`
        CREATE TABLE stations (
          id          INTEGER PRIMARY KEY,
          name        TEXT NOT NULL UNIQUE,
          config_json TEXT,
          updated_at  INTEGER NOT NULL            -- UTC ms
        );
        CREATE TABLE fibres (
          id          INTEGER PRIMARY KEY,
          name        TEXT NOT NULL UNIQUE,
          material    TEXT,
          diameter_m  REAL,
          length_m    REAL,
          width_m     REAL,
          thickness_m REAL
        );
        CREATE TABLE runs (
          id            INTEGER PRIMARY KEY,
          station_id    INTEGER NOT NULL REFERENCES stations(id),
          fibre_id      INTEGER NOT NULL REFERENCES fibres(id),
          started_at_ms INTEGER NOT NULL,         -- UTC ms of t_s = 0
          ended_at_ms   INTEGER,
          status        TEXT NOT NULL DEFAULT 'recording'
                        CHECK (status IN ('recording', 'complete', 'interrupted')),
          source        TEXT NOT NULL CHECK (source IN ('device', 'file', 'simulator')),
          source_path   TEXT,
          samples       INTEGER NOT NULL DEFAULT 0,
          gaps          INTEGER NOT NULL DEFAULT 0,
          meta_json     TEXT
        );
        CREATE INDEX runs_by_fibre   ON runs (fibre_id, started_at_ms);
        CREATE INDEX runs_by_station ON runs (station_id, started_at_ms);
        CREATE INDEX runs_by_start   ON runs (started_at_ms);
        CREATE INDEX runs_by_status  ON runs (status);

        -- one row per chunk of one channel; times in seconds since the run's start.
        -- Encodings (db/codec.ts): time_kind 'uniform' (t0_s + i*dt_s, no blob) or
        -- 'ns-varint'; value_kind 'f32off' | 'ivarint' | 'f64'; all little-endian;
        -- deflated = bit mask of blobs stored deflateRaw'd (1 time, 2 value, 4 flags).
        CREATE TABLE sample_chunks (
          id          INTEGER PRIMARY KEY,
          run_id      INTEGER NOT NULL REFERENCES runs(id) ON DELETE CASCADE,
          channel     TEXT NOT NULL,
          seq         INTEGER NOT NULL,
          t0_s        REAL NOT NULL,
          t1_s        REAL NOT NULL,
          count       INTEGER NOT NULL,
          time_kind   TEXT NOT NULL,
          dt_s        REAL,
          time_blob   BLOB,
          value_kind  TEXT NOT NULL,
          value_base  REAL,
          value_blob  BLOB NOT NULL,
          flags_blob  BLOB,
          deflated    INTEGER NOT NULL DEFAULT 0
        );
        CREATE UNIQUE INDEX chunks_by_run ON sample_chunks (run_id, channel, seq);

        CREATE TABLE events (
          id        INTEGER PRIMARY KEY,
          run_id    INTEGER NOT NULL REFERENCES runs(id) ON DELETE CASCADE,
          t_s       REAL NOT NULL,                -- seconds since the run's start
          t_ms      INTEGER NOT NULL,             -- UTC ms
          kind      TEXT NOT NULL,
          severity  TEXT NOT NULL,
          message   TEXT NOT NULL,
          value     REAL,
          threshold REAL,
          state     TEXT,
          data_json TEXT
        );
        CREATE INDEX events_by_run ON events (run_id, t_s);
      `);
    },
  },
  {
    version: 2,
    description: 'runs.clock and the per-window fit results',
    up(db) {
      db.exec(`
        ALTER TABLE runs ADD COLUMN clock TEXT NOT NULL DEFAULT 'host' CHECK (clock IN ('device', 'host'));
        CREATE TABLE windows (
          run_id                 INTEGER NOT NULL REFERENCES runs(id) ON DELETE CASCADE,
          idx                    INTEGER NOT NULL,
          t_start_s              REAL NOT NULL,
          t_mid_s                REAL NOT NULL,
          t_end_s                REAL NOT NULL,
          samples                INTEGER NOT NULL,
          status                 TEXT NOT NULL,
          period_s               REAL,
          period_sigma_s         REAL,
          decay_time_s           REAL,
          decay_time_sigma_s     REAL,
          q                      REAL,
          q_sigma                REAL,
          amplitude_rad          REAL,
          amplitude_sigma_rad    REAL,
          equilibrium_rad        REAL,
          equilibrium_sigma_rad  REAL,
          drift_rad_per_s        REAL,
          drift_sigma_rad_per_s  REAL,
          phase_rad              REAL,
          residual_rms_rad       REAL,
          chi2_red               REAL,
          kappa_Nm_per_rad       REAL,
          kappa_sigma_Nm_per_rad REAL,
          shear_modulus_Pa       REAL,
          shear_modulus_sigma_Pa REAL,
          temp_C                 REAL,
          PRIMARY KEY (run_id, idx)
        ) WITHOUT ROWID;
      `);
    },
  },
  {
    version: 3,
    description: 'a CRC-32 per sample chunk',
    up(db) {
      // db/codec.ts chunkChecksum; NULL for chunks written before version 3 (read as unverified)
      db.exec('ALTER TABLE sample_chunks ADD COLUMN crc32 INTEGER');
    },
  },
  {
    version: 4,
    description: "the recorder of a run: pid, host and heartbeat (a crashed run told from a live one); the run's time origin",
    up(db) {
      // NULL for runs written before version 4: such a run still 'recording' is taken as crashed
      db.exec(`
        ALTER TABLE runs ADD COLUMN recorder_pid INTEGER;
        ALTER TABLE runs ADD COLUMN recorder_host TEXT;
        ALTER TABLE runs ADD COLUMN heartbeat_ms INTEGER;   -- UTC ms of the recorder's last sign of life
        ALTER TABLE runs ADD COLUMN time_origin_s REAL;     -- the samples' own clock at t_s = 0 (device clock: relates runs)
      `);
    },
  },
  {
    version: 5,
    description: "each window's fitted decay rate with its σ (negative within noise, so τ alone cannot carry it)",
    up(db) {
      db.exec(`
        ALTER TABLE windows ADD COLUMN decay_rate_per_s REAL;
        ALTER TABLE windows ADD COLUMN decay_rate_sigma_per_s REAL;
      `);
    },
  },
  {
    version: 6,
    description: "each run's uid (names it in the lab archive) and what the archive holds of each run",
    up(db) {
      db.exec('ALTER TABLE runs ADD COLUMN uid TEXT');
      // runs from before uids get a name-based one: the same store upgraded twice (in place or in
      // a read-only copy) gives the same uids, so a sync never sees one run under two names
      const old = db.prepare(`SELECT r.id, s.name AS station, r.started_at_ms, r.source, r.source_path
                              FROM runs r JOIN stations s ON s.id = r.station_id WHERE r.uid IS NULL`).all() as Parameters<typeof legacyRunUid>[0][];
      const set = db.prepare('UPDATE runs SET uid = ? WHERE id = ?');
      for (const r of old) set.run(legacyRunUid(r), r.id);
      db.exec(`
        CREATE UNIQUE INDEX runs_by_uid ON runs (uid);
        -- the last sync of each run to a lab archive (informational: the archive's own
        -- contents decide what a sync sends, so losing this table loses nothing)
        CREATE TABLE archive_sync (
          run_id       INTEGER PRIMARY KEY REFERENCES runs(id) ON DELETE CASCADE,
          archive      TEXT NOT NULL,          -- the archive's URL without its password
          archive_run  INTEGER NOT NULL,       -- the run's number in the archive
          synced_at_ms INTEGER NOT NULL,       -- UTC ms of the sync
          synced_to_s  REAL                    -- t_s of the last sample the archive then held
        );
      `);
    },
  },
];

/** The schema version this code writes. */
export const SCHEMA_VERSION = MIGRATIONS[MIGRATIONS.length - 1].version;

/** Read the store's schema version (PRAGMA user_version). */
export function schemaVersion(db: Database): number {
  return db.pragma('user_version', { simple: true }) as number;
}

/**
 * Bring the store up to `target` (default: the latest), one transaction per step.
 * Returns the versions applied. Throws if the file is newer than this code.
 */
export function migrate(db: Database, target: number = SCHEMA_VERSION): number[] {
  const current = schemaVersion(db);
  if (current > SCHEMA_VERSION) {
    throw new Error(`store schema version ${current} is newer than this program's (${SCHEMA_VERSION}): upgrade fibrewatch`);
  }
  const applied: number[] = [];
  for (const m of MIGRATIONS) {
    if (m.version <= current || m.version > target) continue;
    db.transaction(() => {
      m.up(db);
      // user_version cannot take a bound parameter; the value is our own integer
      db.pragma(`user_version = ${m.version | 0}`);
    }).immediate();
    applied.push(m.version);
  }
  return applied;
}
