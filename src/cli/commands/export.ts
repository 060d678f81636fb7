/**
 * `fibrewatch export RUN --what samples|windows|events --format csv|json [--out FILE]`.
 * Samples stream chunk by chunk, so a week-long run never sits in memory.
 */
import { createWriteStream } from 'node:fs';
import { once } from 'node:events';
import type { Writable } from 'node:stream';
import { describeChunkProblem, type ChunkProblem } from '../../../db/sample-reader.js';
import type { ReadStore } from '../../../db/read-store.js';
import { RuntimeError } from '../../domain/errors.js';
import { csv } from '../../display/format.js';
import { safeText } from '../../display/safe-text.js';
import { openReadStore } from '../store.js';
import { WINDOW_COLUMNS } from './windows.js';
import { windowRows } from '../../report/window-rows.js';

/** Columns of an events export, in order (docs/commands.md's event fields, then state and data). */
const EVENT_COLUMNS = ['t', 't_s', 'kind', 'severity', 'message', 'value', 'threshold', 'state', 'data'];
/** The reader went away (`… | head`): stop quietly, as command-line tools do. */
class ReaderGone extends Error {}

/** Write, waiting for the stream to drain; rejects with the stream's error (a closed pipe, a full disk). */
async function write(out: Writable, s: string): Promise<void> {
  const err = (out as Writable & { fwError?: Error }).fwError;
  if (err) throw err;
  if (!out.write(s)) await once(out, 'drain');
}

/** The output stream: a file opened before anything is read (so a bad path fails at once), or stdout. */
async function openOut(path: string | undefined): Promise<Writable> {
  const out: Writable & { fwError?: Error } = path ? createWriteStream(path) : process.stdout;
  // keep the first error for write(); an 'error' with no listener would kill the process
  out.on('error', (e: NodeJS.ErrnoException) => {
    out.fwError ??= e.code === 'EPIPE' && !path ? new ReaderGone() : e;
  });
  if (path) {
    try {
      await once(out, 'open');
    } catch (e) {
      throw new RuntimeError(`--out ${path}: cannot write (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`);
    }
  }
  return out;
}

export async function exportCommand(run: number, opts: { what: 'samples' | 'windows' | 'events'; format: 'csv' | 'json'; out?: string; db?: string }): Promise<void> {
  const store = await openReadStore(opts.db);
  let out: Writable | undefined;
  try {
    const r = await store.getRun(run);
    if (!r) throw new RuntimeError(`run ${run}: no such run in this store`);
    out = await openOut(opts.out);
    if (opts.what === 'samples') {
      await exportSamples(store, run, out, opts.format);
    } else if (opts.format === 'json') {
      const rows = opts.what === 'windows' ? windowRows(await store.listWindows(run), r.started_at_ms) : await store.listEvents(run);
      await write(out, JSON.stringify(rows, null, 2) + '\n');
    } else {
      const rows: Record<string, unknown>[] = opts.what === 'windows'
        ? windowRows(await store.listWindows(run), r.started_at_ms)
        : (await store.listEvents(run)).map((e) => ({ ...e, data: e.data === null ? null : JSON.stringify(e.data) }));
      const keys = rows.length ? Object.keys(rows[0]) : opts.what === 'windows' ? WINDOW_COLUMNS : EVENT_COLUMNS;
      await write(out, csv(keys, rows.map((o) => keys.map((k) => o[k]))));
    }
    if (opts.out) {
      out.end();
      await once(out, 'finish');
    }
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    if (e instanceof ReaderGone || (!opts.out && code === 'EPIPE')) return;
    if (e instanceof RuntimeError) throw e;
    if (opts.out && code) throw new RuntimeError(`--out ${opts.out}: ${code} while writing`);
    throw e;
  } finally {
    await store.close();
    if (opts.out && out && !out.writableFinished) out.destroy();
  }
}

/** Columns: t_s, angle_rad, flags, then each raw channel stored with the run. */
async function exportSamples(store: ReadStore, run: number, out: Writable, format: 'csv' | 'json'): Promise<void> {
  const raw = (await store.listChannels(run)).filter((c) => c !== 'angle');
  const header = ['t_s', 'angle_rad', 'flags', ...raw];
  // a corrupt chunk is exported masked (flags FLAG_INVALID, no values) with a warning, never as garbage
  const onCorrupt = (p: ChunkProblem) =>
    process.stderr.write(`fibrewatch: warning: ${safeText(describeChunkProblem(p))}; its ${p.masked} samples are exported as invalid (flags 8, no value)\n`);
  const angle = store.chunks(run, 'angle', { onCorrupt });
  const others = raw.map((c) => store.chunks(run, c, { onCorrupt })[Symbol.asyncIterator]());
  // the writer cuts every channel's chunks at the same samples, so chunks line up
  if (format === 'csv') await write(out, header.join(',') + '\n');
  else await write(out, '[\n');
  let first = true;
  for await (const a of angle) {
    const cs = (await Promise.all(others.map((it) => it.next()))).map((r) => (r.done ? undefined : r.value));
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
