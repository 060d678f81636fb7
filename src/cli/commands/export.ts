/**
 * `fibrewatch export RUN --what samples|windows|events --format csv|json [--out FILE]`.
 * Samples stream chunk by chunk, so a week-long run never sits in memory.
 */
import { createWriteStream } from 'node:fs';
import { once } from 'node:events';
import type { Writable } from 'node:stream';
import { getRun } from '../../../db/runs.js';
import { iterateChunks, listChannels } from '../../../db/sample-reader.js';
import { listEvents } from '../../../db/events-store.js';
import { listWindows } from '../../../db/windows-store.js';
import { RuntimeError } from '../errors.js';
import { csv } from '../format.js';
import { openForQuery } from '../store.js';
import { windowRows } from './windows.js';

async function write(out: Writable, s: string): Promise<void> {
  if (!out.write(s)) await once(out, 'drain');
}

export async function exportCommand(run: number, opts: { what: 'samples' | 'windows' | 'events'; format: 'csv' | 'json'; out?: string; db?: string }): Promise<void> {
  const db = openForQuery(opts.db);
  const out: Writable = opts.out ? createWriteStream(opts.out) : process.stdout;
  try {
    const r = getRun(db, run);
    if (!r) throw new RuntimeError(`run ${run}: no such run in this store`);
    if (opts.what === 'samples') {
      await exportSamples(db, run, out, opts.format);
    } else {
      const rows: Record<string, unknown>[] = opts.what === 'windows'
        ? windowRows(listWindows(db, run), r.started_at_ms)
        : listEvents(db, run).map((e) => ({ ...e, data: e.data === null ? null : JSON.stringify(e.data) }));
      if (opts.format === 'json') await write(out, JSON.stringify(opts.what === 'events' ? listEvents(db, run) : rows, null, 2) + '\n');
      else {
        const keys = rows.length ? Object.keys(rows[0]) : [];
        await write(out, csv(keys, rows.map((o) => keys.map((k) => o[k]))));
      }
    }
  } finally {
    db.close();
    if (opts.out) {
      out.end();
      await once(out, 'finish');
    }
  }
}

/** Columns: t_s, angle_rad, flags, then each raw channel stored with the run. */
async function exportSamples(db: import('better-sqlite3').Database, run: number, out: Writable, format: 'csv' | 'json'): Promise<void> {
  const raw = listChannels(db, run).filter((c) => c !== 'angle');
  const header = ['t_s', 'angle_rad', 'flags', ...raw];
  const angle = iterateChunks(db, run, 'angle');
  const others = raw.map((c) => iterateChunks(db, run, c));
  // the writer cuts every channel's chunks at the same samples, so chunks line up
  if (format === 'csv') await write(out, header.join(',') + '\n');
  else await write(out, '[\n');
  let first = true;
  for (const a of angle) {
    const cs = others.map((it) => it.next().value);
    const lines: string[] = [];
    for (let i = 0; i < a.t.length; i++) {
      const vals = [a.t[i], a.v[i], a.flags ? a.flags[i] : 0, ...cs.map((c) => (c && c.t[i] === a.t[i] ? c.v[i] : NaN))];
      if (format === 'csv') lines.push(vals.map((v) => (Number.isFinite(v) ? String(v) : '')).join(','));
      else {
        const o: Record<string, number | null> = {};
        header.forEach((h, k) => (o[h] = Number.isFinite(vals[k]) ? vals[k] : null));
        lines.push((first ? '' : ',\n') + JSON.stringify(o));
        first = false;
      }
    }
    await write(out, format === 'csv' ? lines.join('\n') + '\n' : lines.join(''));
  }
  if (format === 'json') await write(out, '\n]\n');
}
