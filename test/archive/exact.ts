/**
 * For the archive tests: is the archive exactly the station's store? Every
 * run by uid, with its account; every sample chunk byte for byte (encoded
 * blobs and CRC-32), every window and every event with its station id.
 */
import { expect } from 'vitest';
import Database from 'better-sqlite3';
import pg from 'pg';
import { WINDOW_FIELDS } from '../../src/domain/window-result.js';

const CHUNK_COLUMNS = ['channel', 'seq', 't0_s', 't1_s', 'count', 'time_kind', 'dt_s', 'time_blob', 'value_kind', 'value_base', 'value_blob', 'flags_blob', 'deflated', 'crc32'];
const WINDOW_COLUMNS = ['idx', ...WINDOW_FIELDS.filter((f) => f !== 'index')];
const EVENT_COLUMNS = ['t_s', 't_ms', 'kind', 'severity', 'message', 'value', 'threshold', 'state', 'data_json'];
const RUN_COLUMNS = ['started_at_ms', 'ended_at_ms', 'status', 'source', 'source_path', 'clock', 'time_origin_s', 'samples', 'gaps', 'meta_json'];

/** Buffers as hex, so that a difference shows where it is. */
const plain = (row: Record<string, unknown>) => Object.fromEntries(Object.entries(row).map(([k, v]) => [k, Buffer.isBuffer(v) ? v.toString('hex') : v]));

/** Counts of the archive's rows (to show that a repeated sync added nothing). */
export async function archiveCounts(url: string): Promise<Record<string, number>> {
  const c = new pg.Client({ connectionString: url });
  await c.connect();
  try {
    const out: Record<string, number> = {};
    for (const t of ['stations', 'fibres', 'runs', 'sample_chunks', 'windows', 'events']) {
      out[t] = Number((await c.query(`SELECT count(*) AS n FROM ${t}`)).rows[0].n);
    }
    out.change_ids = Number((await c.query('SELECT COALESCE(sum(change_id), 0) AS n FROM runs')).rows[0].n);
    return out;
  } finally {
    await c.end();
  }
}

/** Assert that every run of the station's store is in the archive exactly; returns station run → archive run. */
export async function expectArchiveHolds(stationDb: string, url: string): Promise<Map<number, number>> {
  const s = new Database(stationDb, { readonly: true, fileMustExist: true });
  const c = new pg.Client({ connectionString: url });
  await c.connect();
  const map = new Map<number, number>();
  try {
    const runs = s.prepare(`SELECT id, uid, ${RUN_COLUMNS.join(', ')} FROM runs ORDER BY id`).all() as (Record<string, unknown> & { id: number; uid: string })[];
    for (const r of runs) {
      const a = (await c.query(`SELECT id, station_run, ${RUN_COLUMNS.join(', ')} FROM runs WHERE uid = $1`, [r.uid])).rows[0];
      expect(a, `run ${r.id} (uid ${r.uid}) is in the archive`).toBeDefined();
      map.set(r.id, a.id);
      const { id, uid, ...account } = r;
      const { id: aid, station_run, ...aAccount } = a;
      expect(station_run).toBe(id);
      // bigint columns arrive as strings from a plain client
      for (const k of ['started_at_ms', 'ended_at_ms', 'samples']) if (aAccount[k] !== null) aAccount[k] = Number(aAccount[k]);
      expect(aAccount, `run ${id}'s account`).toEqual(account);

      const sc = s.prepare(`SELECT ${CHUNK_COLUMNS.join(', ')} FROM sample_chunks WHERE run_id = ? ORDER BY channel, seq`).all(id) as Record<string, unknown>[];
      const ac = (await c.query(`SELECT ${CHUNK_COLUMNS.join(', ')} FROM sample_chunks WHERE run_id = $1 ORDER BY channel COLLATE "C", seq`, [aid])).rows
        .map((x) => ({ ...x, crc32: x.crc32 === null ? null : Number(x.crc32) }));
      expect(ac.length, `run ${id}: chunks`).toBe(sc.length);
      for (let i = 0; i < sc.length; i++) expect(plain(ac[i]), `run ${id}, chunk ${i}`).toEqual(plain(sc[i]));

      const sw = s.prepare(`SELECT ${WINDOW_COLUMNS.join(', ')} FROM windows WHERE run_id = ? ORDER BY idx`).all(id);
      const aw = (await c.query(`SELECT ${WINDOW_COLUMNS.map((x) => `"${x}"`).join(', ')} FROM windows WHERE run_id = $1 ORDER BY idx`, [aid])).rows;
      expect(aw, `run ${id}: windows`).toEqual(sw);

      const se = s.prepare(`SELECT id, ${EVENT_COLUMNS.join(', ')} FROM events WHERE run_id = ? ORDER BY id`).all(id);
      const ae = (await c.query(`SELECT station_event AS id, ${EVENT_COLUMNS.join(', ')} FROM events WHERE run_id = $1 ORDER BY station_event`, [aid])).rows
        .map((x) => ({ ...x, id: Number(x.id), t_ms: Number(x.t_ms) }));
      expect(ae, `run ${id}: events`).toEqual(se);
    }
  } finally {
    s.close();
    await c.end();
  }
  return map;
}
