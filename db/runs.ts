/**
 * Runs: one continuous recording of one station's fibre, from a device, a file
 * or the simulator.
 */
import type { Database } from 'better-sqlite3';
import { prepared } from './statements.js';
import { newRunUid } from './run-uid.js';

export type RunStatus = 'recording' | 'complete' | 'interrupted';
export type RunSource = 'device' | 'file' | 'simulator';
export type RunClock = 'device' | 'host';

/** A fibre as the store knows it (SI units). */
export interface FibreInput {
  name: string;
  material?: string;
  diameter_m?: number;
  length_m?: number;
  width_m?: number;
  thickness_m?: number;
}

export interface NewRun {
  /** station name (stations are created on first use) */
  station: string;
  /** the station file as used, stored as JSON on the station */
  stationConfig?: object;
  /** the fibre (created on first use; given geometry replaces what is stored) */
  fibre: FibreInput;
  /** UTC ms of t_s = 0 */
  startedAt_ms: number;
  source: RunSource;
  sourcePath?: string;
  /** which clock the samples' times come from; default 'host' */
  clock?: RunClock;
  meta?: object;
  /** the process writing the run (its heartbeat starts now): tells a live run from a crashed one */
  recorder?: RecorderInfo;
  /** the run's uid; default a fresh random one (db/run-uid.ts) */
  uid?: string;
}

/** The process that writes a run. */
export interface RecorderInfo {
  pid: number;
  host: string;
}

/** A run still 'recording', with what is known of its recorder. */
export interface OpenRun {
  id: number;
  source: RunSource;
  /** null for runs written before the store kept recorders (schema 4) */
  pid: number | null;
  host: string | null;
  /** UTC ms of the recorder's last heartbeat, or null */
  heartbeat_ms: number | null;
}

/** A run's row in the shape of docs/commands.md's `runs` JSON. */
export interface RunListing {
  run: number;
  station: string;
  fibre: string;
  started_at: string;
  ended_at: string | null;
  samples: number;
  status: RunStatus;
  source: RunSource;
  gaps: number;
  windows: number;
  /** made by the station when the run began: names the run in the lab archive too */
  uid: string;
  /** the run's number in its station's store (in a station's store: `run` itself; in the archive: the station's number) */
  station_run: number;
}

/** Everything stored about one run. */
export interface RunRecord extends RunListing {
  started_at_ms: number;
  ended_at_ms: number | null;
  source_path: string | null;
  clock: RunClock;
  station_config: unknown;
  fibre_info: Required<Pick<FibreInput, 'name'>> & { material: string | null; diameter_m: number | null; length_m: number | null; width_m: number | null; thickness_m: number | null };
  events: number;
  meta: unknown;
}

/** Filter for listRuns; times are UTC ms. */
export interface RunFilter {
  fibre?: string;
  station?: string;
  /** runs whose span reaches this time or later (inclusive) */
  since_ms?: number;
  /** runs that started before this time (exclusive) */
  until_ms?: number;
  /** "now" for the end of a run still recording; default Date.now() */
  now_ms?: number;
}

const iso = (ms: number | null): string | null => (ms === null ? null : new Date(ms).toISOString());
const checkTime = (what: string, ms: number): number => {
  if (!Number.isFinite(ms)) throw new RangeError(`${what}: must be a finite time in ms, got ${ms}`);
  return Math.round(ms);
};

/** Create a run in status 'recording' (and its station and fibre if new); returns its id. */
export function createRun(db: Database, r: NewRun): number {
  if (!r.station) throw new Error('createRun: station: must not be empty');
  if (!r.fibre?.name) throw new Error('createRun: fibre.name: must not be empty');
  const started = checkTime('createRun: startedAt_ms', r.startedAt_ms);
  return db.transaction(() => {
    const now = Date.now();
    db.prepare(`INSERT INTO stations (name, config_json, updated_at) VALUES (?, ?, ?)
                ON CONFLICT (name) DO UPDATE SET
                  config_json = COALESCE(excluded.config_json, config_json), updated_at = excluded.updated_at`)
      .run(r.station, r.stationConfig === undefined ? null : JSON.stringify(r.stationConfig), now);
    const stationId = (db.prepare('SELECT id FROM stations WHERE name = ?').get(r.station) as { id: number }).id;
    const f = r.fibre;
    db.prepare(`INSERT INTO fibres (name, material, diameter_m, length_m, width_m, thickness_m)
                VALUES (@name, @material, @diameter_m, @length_m, @width_m, @thickness_m)
                ON CONFLICT (name) DO UPDATE SET
                  material = COALESCE(excluded.material, material),
                  diameter_m = COALESCE(excluded.diameter_m, diameter_m),
                  length_m = COALESCE(excluded.length_m, length_m),
                  width_m = COALESCE(excluded.width_m, width_m),
                  thickness_m = COALESCE(excluded.thickness_m, thickness_m)`)
      .run({
        name: f.name, material: f.material ?? null, diameter_m: f.diameter_m ?? null, length_m: f.length_m ?? null,
        width_m: f.width_m ?? null, thickness_m: f.thickness_m ?? null,
      });
    const fibreId = (db.prepare('SELECT id FROM fibres WHERE name = ?').get(f.name) as { id: number }).id;
    const info = db.prepare(`INSERT INTO runs (station_id, fibre_id, started_at_ms, status, source, source_path, clock, meta_json,
                                               recorder_pid, recorder_host, heartbeat_ms, uid)
                             VALUES (?, ?, ?, 'recording', ?, ?, ?, ?, ?, ?, ?, ?)`)
      .run(stationId, fibreId, started, r.source, r.sourcePath ?? null, r.clock ?? 'host', r.meta === undefined ? null : JSON.stringify(r.meta),
        r.recorder?.pid ?? null, r.recorder?.host ?? null, r.recorder ? now : null, r.uid ?? newRunUid());
    return Number(info.lastInsertRowid);
  }).immediate();
}

/** Close a run: set its status and end time (UTC ms). */
export function endRun(db: Database, runId: number, status: 'complete' | 'interrupted', endedAt_ms: number): void {
  if (status !== 'complete' && status !== 'interrupted') throw new Error(`endRun: status: must be "complete" or "interrupted", got "${status}"`);
  const info = db.prepare('UPDATE runs SET status = ?, ended_at_ms = ? WHERE id = ?').run(status, checkTime('endRun: endedAt_ms', endedAt_ms), runId);
  if (info.changes === 0) throw new Error(`endRun: run ${runId} does not exist`);
}

const heartbeatStatements = (db: Database) => ({
  beat: db.prepare("UPDATE runs SET heartbeat_ms = ? WHERE id = ? AND status = 'recording'"),
});

/** The recorder of a run is alive: store `now_ms` (UTC) as its heartbeat. */
export function heartbeat(db: Database, runId: number, now_ms: number): void {
  prepared(db, heartbeatStatements).beat.run(checkTime('heartbeat: now_ms', now_ms), runId);
}

/** Record the run's time base once its first sample is known: which clock, and that clock's reading at t_s = 0. */
export function setRunTimeBase(db: Database, runId: number, clock: RunClock, origin_s: number): void {
  db.prepare('UPDATE runs SET clock = ?, time_origin_s = ? WHERE id = ?').run(clock, Number.isFinite(origin_s) ? origin_s : null, runId);
}

/**
 * The device-clock time of a run's last stored sample, or undefined when the
 * run is not on a device clock or holds no samples.
 */
export function lastDeviceTime(db: Database, runId: number): number | undefined {
  const r = db.prepare(`
    SELECT r.clock, r.time_origin_s AS origin, (SELECT MAX(t1_s) FROM sample_chunks c WHERE c.run_id = r.id) AS last
    FROM runs r WHERE r.id = ?`).get(runId) as { clock: RunClock; origin: number | null; last: number | null } | undefined;
  if (!r || r.clock !== 'device' || r.origin === null || r.last === null) return undefined;
  return r.origin + r.last;
}

/** Runs of a station still 'recording', oldest first, with their recorders. */
export function openRuns(db: Database, station: string): OpenRun[] {
  return db.prepare(`
    SELECT r.id, r.source, r.recorder_pid AS pid, r.recorder_host AS host, r.heartbeat_ms
    FROM runs r JOIN stations s ON s.id = r.station_id
    WHERE r.status = 'recording' AND s.name = ?
    ORDER BY r.id`).all(station) as OpenRun[];
}

/**
 * Mark runs left 'recording' (optionally only one station's) as 'interrupted',
 * ending them at their last stored sample or event; returns their ids.
 * Called at start-up: a run still 'recording' then was cut off by a crash —
 * except the runs in `keep` (ids of runs whose recorder is known to be alive).
 */
export function markInterrupted(db: Database, station?: string, keep: readonly number[] = []): number[] {
  return db.transaction(() => {
    const rows = db.prepare(`
      SELECT r.id, r.started_at_ms,
             (SELECT MAX(t1_s) FROM sample_chunks c WHERE c.run_id = r.id) AS last_sample_s,
             (SELECT MAX(t_ms) FROM events e WHERE e.run_id = r.id) AS last_event_ms
      FROM runs r JOIN stations s ON s.id = r.station_id
      WHERE r.status = 'recording' AND (? IS NULL OR s.name = ?)
      ORDER BY r.id`).all(station ?? null, station ?? null) as { id: number; started_at_ms: number; last_sample_s: number | null; last_event_ms: number | null }[];
    const upd = db.prepare("UPDATE runs SET status = 'interrupted', ended_at_ms = ? WHERE id = ?");
    const ended = rows.filter((r) => !keep.includes(r.id));
    for (const r of ended) {
      let end = r.started_at_ms;
      if (r.last_sample_s !== null) end = Math.max(end, Math.round(r.started_at_ms + 1000 * r.last_sample_s));
      if (r.last_event_ms !== null) end = Math.max(end, r.last_event_ms);
      upd.run(end, r.id);
    }
    return ended.map((r) => r.id);
  }).immediate();
}

const LISTING_SELECT = `
  SELECT r.id AS run, s.name AS station, f.name AS fibre, r.started_at_ms, r.ended_at_ms, r.samples,
         r.status, r.source, r.gaps, (SELECT COUNT(*) FROM windows w WHERE w.run_id = r.id) AS windows,
         r.uid, r.id AS station_run
  FROM runs r JOIN stations s ON s.id = r.station_id JOIN fibres f ON f.id = r.fibre_id`;

/** A run's row as the listing queries select it (both stores select these names). */
export interface ListingRow {
  run: number; station: string; fibre: string; started_at_ms: number; ended_at_ms: number | null;
  samples: number; status: RunStatus; source: RunSource; gaps: number; windows: number;
  uid: string; station_run: number;
}

/** A listing row in the shape of `runs --json`. */
export const toListing = (r: ListingRow): RunListing => ({
  run: r.run, station: r.station, fibre: r.fibre, started_at: iso(r.started_at_ms)!, ended_at: iso(r.ended_at_ms),
  samples: r.samples, status: r.status, source: r.source, gaps: r.gaps, windows: r.windows,
  uid: r.uid, station_run: r.station_run,
});

/**
 * Runs matching the filter, oldest first. A run spans [started_at, ended_at or now];
 * it matches when that span overlaps [since, until): it started before `until`
 * and had not ended before `since`.
 */
export function listRuns(db: Database, f: RunFilter = {}): RunListing[] {
  const now = f.now_ms ?? Date.now();
  const rows = db.prepare(`${LISTING_SELECT}
    WHERE (@fibre IS NULL OR f.name = @fibre)
      AND (@station IS NULL OR s.name = @station)
      AND (@until IS NULL OR r.started_at_ms < @until)
      AND (@since IS NULL OR COALESCE(r.ended_at_ms, MAX(@now, r.started_at_ms)) >= @since)
    ORDER BY r.started_at_ms, r.id`).all({
    fibre: f.fibre ?? null, station: f.station ?? null, since: f.since_ms ?? null, until: f.until_ms ?? null, now,
  }) as ListingRow[];
  return rows.map(toListing);
}

/** One run with everything stored about it, or undefined if there is none. */
export function getRun(db: Database, runId: number): RunRecord | undefined {
  const r = db.prepare(`
    SELECT r.id AS run, s.name AS station, f.name AS fibre, r.started_at_ms, r.ended_at_ms, r.samples,
           r.status, r.source, r.gaps, r.source_path, r.clock, r.meta_json, s.config_json,
           f.material, f.diameter_m, f.length_m, f.width_m, f.thickness_m,
           (SELECT COUNT(*) FROM windows w WHERE w.run_id = r.id) AS windows,
           (SELECT COUNT(*) FROM events e WHERE e.run_id = r.id) AS events,
           r.uid, r.id AS station_run
    FROM runs r JOIN stations s ON s.id = r.station_id JOIN fibres f ON f.id = r.fibre_id
    WHERE r.id = ?`).get(runId) as RecordRow | undefined;
  return r && toRecord(r);
}

/** A run's row as getRun selects it (both stores select these names). */
export type RecordRow = ListingRow & {
  source_path: string | null; clock: RunClock; meta_json: string | null; config_json: string | null;
  material: string | null; diameter_m: number | null; length_m: number | null; width_m: number | null;
  thickness_m: number | null; events: number;
};

/** A getRun row as a RunRecord. */
export function toRecord(r: RecordRow): RunRecord {
  return {
    ...toListing(r),
    started_at_ms: r.started_at_ms,
    ended_at_ms: r.ended_at_ms,
    source_path: r.source_path,
    clock: r.clock,
    station_config: r.config_json === null ? null : JSON.parse(r.config_json),
    fibre_info: { name: r.fibre, material: r.material, diameter_m: r.diameter_m, length_m: r.length_m, width_m: r.width_m, thickness_m: r.thickness_m },
    events: r.events,
    meta: r.meta_json === null ? null : JSON.parse(r.meta_json),
  };
}

/**
 * Delete a run with its samples, windows and events (foreign keys cascade), and
 * the station and fibre if no other run uses them: undoes a run that recorded
 * nothing (an import of a file that decoded to no samples). Returns whether it existed.
 */
export function deleteRun(db: Database, runId: number): boolean {
  return db.transaction(() => {
    const r = db.prepare('SELECT station_id, fibre_id FROM runs WHERE id = ?').get(runId) as { station_id: number; fibre_id: number } | undefined;
    if (!r) return false;
    db.prepare('DELETE FROM runs WHERE id = ?').run(runId);
    db.prepare('DELETE FROM fibres WHERE id = ? AND NOT EXISTS (SELECT 1 FROM runs WHERE fibre_id = ?)').run(r.fibre_id, r.fibre_id);
    db.prepare('DELETE FROM stations WHERE id = ? AND NOT EXISTS (SELECT 1 FROM runs WHERE station_id = ?)').run(r.station_id, r.station_id);
    return true;
  }).immediate();
}

/**
 * Move a run's start to `ms` (UTC). Sample and event times are stored relative
 * to the start, so only the UTC stamps move: ended_at and every event's t_ms
 * shift by the same amount.
 */
export function updateRunStartedAt(db: Database, runId: number, ms: number): void {
  const to = checkTime('updateRunStartedAt: ms', ms);
  db.transaction(() => {
    const r = db.prepare('SELECT started_at_ms FROM runs WHERE id = ?').get(runId) as { started_at_ms: number } | undefined;
    if (!r) throw new Error(`updateRunStartedAt: run ${runId} does not exist`);
    const delta = to - r.started_at_ms;
    if (delta === 0) return;
    db.prepare('UPDATE runs SET started_at_ms = ?, ended_at_ms = ended_at_ms + ? WHERE id = ?').run(to, delta, runId);
    db.prepare('UPDATE events SET t_ms = t_ms + ? WHERE run_id = ?').run(delta, runId);
  }).immediate();
}

const DATE_ONLY = /^(\d{4})-(\d{2})-(\d{2})$/;
const DATE_TIME = /^(\d{4})-(\d{2})-(\d{2})[T ](\d{2}):(\d{2})(?::(\d{2})(?:[.,](\d{1,9}))?)?(Z|[+-]\d{2}:?\d{2})?$/i;

/**
 * Parse a --since/--until value: YYYY-MM-DD (UTC midnight) or ISO 8601 date-time
 * (a time without an offset is taken as UTC); returns UTC ms.
 */
export function parseDateArg(s: string): number {
  const bad = (why: string): never => {
    throw new Error(`"${s}" is not a date: ${why} (use YYYY-MM-DD or ISO 8601 such as 2026-03-01T12:00:00Z)`);
  };
  const text = s.trim();
  let m = DATE_ONLY.exec(text);
  let y: number, mo: number, d: number, h = 0, mi = 0, sec = 0, frac = 0, offMin = 0;
  if (m) {
    [y, mo, d] = [Number(m[1]), Number(m[2]), Number(m[3])];
  } else {
    m = DATE_TIME.exec(text);
    if (!m) return bad('unrecognised format');
    [y, mo, d, h, mi] = [Number(m[1]), Number(m[2]), Number(m[3]), Number(m[4]), Number(m[5])];
    sec = m[6] ? Number(m[6]) : 0;
    frac = m[7] ? Number(`0.${m[7]}`) : 0;
    const z = m[8];
    if (z && z.toUpperCase() !== 'Z') {
      const sign = z[0] === '-' ? -1 : 1;
      const digits = z.slice(1).replace(':', '');
      const oh = Number(digits.slice(0, 2));
      const om = Number(digits.slice(2));
      if (oh > 23 || om > 59) bad(`offset ${z} out of range`);
      offMin = sign * (oh * 60 + om);
    }
  }
  if (mo < 1 || mo > 12) bad(`month ${mo} out of range`);
  if (h > 23 || mi > 59 || sec > 59) bad('time of day out of range');
  const ms = Date.UTC(y, mo - 1, d, h, mi, sec) + Math.round(frac * 1000) - offMin * 60_000;
  if (new Date(Date.UTC(y, mo - 1, d)).getUTCDate() !== d) bad(`day ${d} does not exist in ${y}-${String(mo).padStart(2, '0')}`);
  if (!Number.isFinite(ms)) bad('out of range');
  return ms;
}
