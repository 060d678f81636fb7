/**
 * Fibre queries: the fibres the store knows and one fibre's history run by run.
 */
import type { Database } from 'better-sqlite3';

/** A fibre with its run count and first/last run start (ISO 8601 UTC). */
export interface FibreListing {
  name: string;
  material: string | null;
  diameter_m: number | null;
  length_m: number | null;
  width_m: number | null;
  thickness_m: number | null;
  runs: number;
  first_run: string | null;
  last_run: string | null;
}

const iso = (ms: number | null): string | null => (ms === null ? null : new Date(ms).toISOString());

/** All fibres, by name. */
export function listFibres(db: Database): FibreListing[] {
  const rows = db.prepare(`
    SELECT f.name, f.material, f.diameter_m, f.length_m, f.width_m, f.thickness_m,
           COUNT(r.id) AS runs, MIN(r.started_at_ms) AS first_ms, MAX(r.started_at_ms) AS last_ms
    FROM fibres f LEFT JOIN runs r ON r.fibre_id = f.id
    GROUP BY f.id ORDER BY f.name`).all() as (Omit<FibreListing, 'first_run' | 'last_run'> & { first_ms: number | null; last_ms: number | null })[];
  return rows.map(({ first_ms, last_ms, ...f }) => ({ ...f, first_run: iso(first_ms), last_run: iso(last_ms) }));
}

/** A fibre's runs, oldest first, with what a per-run summary needs. */
export interface FibreRun {
  run: number;
  station: string;
  /** the run's station-made identifier, and its number in its station's store (the same as `run` there) */
  uid: string;
  station_run: number;
  started_at_ms: number;
  ended_at_ms: number | null;
  status: string;
  samples: number;
  station_config: unknown;
}

/** The runs of one fibre (none for an unknown name). */
export function fibreRuns(db: Database, name: string): FibreRun[] {
  const rows = db.prepare(`
    SELECT r.id AS run, s.name AS station, r.uid, r.id AS station_run, r.started_at_ms, r.ended_at_ms, r.status, r.samples, s.config_json
    FROM runs r JOIN fibres f ON f.id = r.fibre_id JOIN stations s ON s.id = r.station_id
    WHERE f.name = ? ORDER BY r.started_at_ms, r.id`).all(name) as (Omit<FibreRun, 'station_config'> & { config_json: string | null })[];
  return rows.map(({ config_json, ...r }) => ({ ...r, station_config: config_json ? JSON.parse(config_json) : null }));
}
