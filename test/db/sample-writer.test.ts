import { afterEach, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Database } from 'better-sqlite3';
import { openStore } from '../../db/open.js';
import { createRun } from '../../db/runs.js';
import { SampleWriter } from '../../db/sample-writer.js';
import { iterateChunks, listChannels, readSamples } from '../../db/sample-reader.js';
import { FLAG_AFTER_GAP, FLAG_SATURATED } from '../../src/domain/block.js';
import { rng } from '../helpers/blocks.js';

const dirs: string[] = [];
function tmpFile(): string {
  const d = mkdtempSync(join(tmpdir(), 'fw-db-'));
  dirs.push(d);
  return join(d, 'store.db');
}
afterEach(() => {
  for (const d of dirs.splice(0)) rmSync(d, { recursive: true, force: true });
});


function newRun(db: Database): number {
  return createRun(db, { station: 'bench-a', fibre: { name: 'W25-03' }, startedAt_ms: Date.UTC(2026, 1, 1), source: 'simulator' });
}

/** A recording: 20 Hz with jitter, a gap, an angle channel and integer encoder counts. */
function recording(n: number, seed = 1) {
  const r = rng(seed);
  const t = new Float64Array(n);
  const angle = new Float64Array(n);
  const counts = new Float64Array(n);
  const flags = new Uint8Array(n);
  let x = 0;
  for (let i = 0; i < n; i++) {
    x += i === Math.floor(n / 2) ? 12.5 : 0.05 + (i > n * 0.75 ? (r() - 0.5) * 1e-4 : 0);
    t[i] = x;
    angle[i] = 2e-3 * Math.exp(-x / 500) * Math.sin(2 * Math.PI * x / 9.3) + 1e-7 * (r() - 0.5) + 0.31;
    counts[i] = Math.round(angle[i] * 1e6);
    if (i === Math.floor(n / 2)) flags[i] = FLAG_AFTER_GAP;
    if (i % 997 === 5) flags[i] |= FLAG_SATURATED;
  }
  return { t, angle, counts, flags };
}

function expectClose(a: Float64Array, b: Float64Array, tol: number): void {
  expect(a.length).toBe(b.length);
  let worst = 0;
  for (let i = 0; i < a.length; i++) worst = Math.max(worst, Math.abs(a[i] - b[i]));
  expect(worst).toBeLessThanOrEqual(tol);
}

describe('SampleWriter and readSamples', () => {
  it('round-trips many chunks written in odd-sized blocks with partial flushes', () => {
    const db = openStore(tmpFile());
    const run = newRun(db);
    const n = 30_011;
    const rec = recording(n);
    const w = new SampleWriter(db, run, { chunkSamples: 1000 });
    const r = rng(5);
    let i = 0;
    let now = 0;
    let flushes = 0;
    while (i < n) {
      const k = Math.min(n - i, 1 + Math.floor(r() * 700));
      w.append(rec.t.subarray(i, i + k), { angle: rec.angle.subarray(i, i + k), counts: rec.counts.subarray(i, i + k) }, rec.flags.subarray(i, i + k));
      i += k;
      now += 400;
      if (w.flushIfDue(now)) flushes++;
    }
    w.flush();
    expect(flushes).toBeGreaterThan(10);
    expect(w.samples).toBe(n);
    expect(db.prepare('SELECT samples FROM runs WHERE id = ?').get(run)).toEqual({ samples: n });
    // partial chunks are rewritten as they grow: the rows are full chunks plus one tail
    const kinds = db.prepare("SELECT DISTINCT time_kind FROM sample_chunks ORDER BY 1").all();
    expect(kinds).toEqual([{ time_kind: 'ns-varint' }, { time_kind: 'uniform' }]);
    const rows = db.prepare("SELECT seq, count FROM sample_chunks WHERE run_id = ? AND channel = 'angle' ORDER BY seq").all(run) as { seq: number; count: number }[];
    expect(rows.map((x) => x.seq)).toEqual(Array.from({ length: 31 }, (_, j) => j));
    expect(rows.slice(0, 30).every((x) => x.count === 1000)).toBe(true);
    expect(rows[30].count).toBe(11);

    const a = readSamples(db, run, 'angle');
    expectClose(a.t, rec.t, 1e-9);
    // f32off: float32 precision of each chunk's half-spread (≤ 2e-3 rad here)
    expectClose(a.v, rec.angle, 2 ** -24 * 2e-3 + 1e-15);
    expect(Buffer.from(a.flags).equals(Buffer.from(rec.flags))).toBe(true);
    const c = readSamples(db, run, 'counts');
    expect(Buffer.from(c.v.buffer).equals(Buffer.from(rec.counts.buffer))).toBe(true); // integers: lossless
    expect(listChannels(db, run)).toEqual(['angle', 'counts']);
    expect(db.pragma('integrity_check', { simple: true })).toBe('ok');
    db.close();
  });

  it('reads a time range [from_s, to_s) and iterates chunk by chunk', () => {
    const db = openStore(tmpFile());
    const run = newRun(db);
    const n = 20_000;
    const rec = recording(n, 2);
    const w = new SampleWriter(db, run, { chunkSamples: 512 });
    w.append(rec.t, { angle: rec.angle });
    w.flush();
    const from = rec.t[3000];
    const to = rec.t[15_000];
    const part = readSamples(db, run, 'angle', { from_s: from, to_s: to });
    expect(part.t.length).toBe(12_000);
    expect(part.t[0]).toBeCloseTo(from, 9);
    expect(part.t[part.t.length - 1]).toBeCloseTo(rec.t[14_999], 9);
    let total = 0;
    let lastSeq = -1;
    for (const ch of iterateChunks(db, run, 'angle', { batchChunks: 3 })) {
      expect(ch.seq).toBeGreaterThan(lastSeq);
      lastSeq = ch.seq;
      total += ch.t.length;
      // the connection stays usable between chunks: no statement is left open
      db.prepare('UPDATE runs SET meta_json = ? WHERE id = ?').run(String(total), run);
    }
    expect(total).toBe(n);
    expect(readSamples(db, run, 'angle', { from_s: 1e9 }).t.length).toBe(0);
    expect(readSamples(db, run, 'nope').t.length).toBe(0);
    db.close();
  });

  it('commits at most maxLatency_ms late, and what is committed is visible to another connection', () => {
    const path = tmpFile();
    const db = openStore(path);
    const reader = openStore(path, { readonly: true });
    const run = newRun(db);
    const w = new SampleWriter(db, run, { maxLatency_ms: 1000 });
    const stored = () => (reader.prepare('SELECT samples FROM runs WHERE id = ?').get(run) as { samples: number }).samples;
    const block = (k: number, t0: number) => Float64Array.from({ length: k }, (_, i) => t0 + i * 0.05);
    w.append(block(20, 0), { angle: block(20, 0) });
    expect(w.flushIfDue(10_000)).toBe(true); // first data: committed at once
    expect(stored()).toBe(20);
    w.append(block(20, 1), { angle: block(20, 1) });
    expect(w.flushIfDue(10_500)).toBe(false); // not yet due
    expect(stored()).toBe(20); // buffered only: a crash now loses this half second
    expect(w.flushIfDue(11_000)).toBe(true);
    expect(stored()).toBe(40);
    expect(w.flushIfDue(20_000)).toBe(false); // nothing new
    expect(readSamples(reader, run, 'angle').t.length).toBe(40);
    expect(db.prepare('SELECT COUNT(*) AS n FROM sample_chunks').get()).toEqual({ n: 1 }); // one growing row
    reader.close();
    db.close();
  });

  it('deflateFloats stores fewer bytes and reads back the same samples', () => {
    const db = openStore(tmpFile());
    const rec = recording(10_000, 4);
    const sizes: number[] = [];
    const back: Float64Array[] = [];
    for (const deflateFloats of [false, true]) {
      const run = newRun(db);
      const w = new SampleWriter(db, run, { deflateFloats });
      w.append(rec.t, { angle: rec.angle });
      w.flush();
      sizes.push((db.prepare('SELECT SUM(LENGTH(value_blob)) AS b FROM sample_chunks WHERE run_id = ?').get(run) as { b: number }).b);
      back.push(readSamples(db, run, 'angle').v);
    }
    expect(sizes[1]).toBeLessThan(0.8 * sizes[0]);
    expect(Buffer.from(back[0].buffer).equals(Buffer.from(back[1].buffer))).toBe(true);
    db.close();
  });

  it('a second writer on the same run continues after the stored chunks', () => {
    const db = openStore(tmpFile());
    const run = newRun(db);
    const t = Float64Array.from({ length: 300 }, (_, i) => i * 0.1);
    const v = Float64Array.from({ length: 300 }, (_, i) => i);
    const w1 = new SampleWriter(db, run, { chunkSamples: 128 });
    w1.append(t.subarray(0, 200), { angle: v.subarray(0, 200) });
    w1.flush();
    const w2 = new SampleWriter(db, run, { chunkSamples: 128 });
    expect(w2.samples).toBe(200);
    w2.append(t.subarray(200), { angle: v.subarray(200) });
    w2.flush();
    const back = readSamples(db, run, 'angle');
    expect(Array.from(back.v)).toEqual(Array.from(v));
    expect(db.prepare('SELECT samples FROM runs WHERE id = ?').get(run)).toEqual({ samples: 300 });
    db.close();
  });

  it('refuses a changed channel set, short arrays and an unknown run, naming them', () => {
    const db = openStore(tmpFile());
    const run = newRun(db);
    expect(() => new SampleWriter(db, run + 99)).toThrow(/run \d+ does not exist/);
    expect(() => new SampleWriter(db, run, { chunkSamples: 0 })).toThrow(/chunkSamples/);
    const w = new SampleWriter(db, run);
    w.append(Float64Array.of(0, 1), { angle: Float64Array.of(0, 1), temp_C: Float64Array.of(20, 20) });
    expect(() => w.append(Float64Array.of(2), { angle: Float64Array.of(2) })).toThrow(/channels \[angle\] differ/);
    expect(() => w.append(Float64Array.of(2, 3), { angle: Float64Array.of(2), temp_C: Float64Array.of(1, 2) })).toThrow(/"angle" has 1/);
    db.close();
  });
});
