/**
 * checkStore: SQLite's integrity and foreign-key checks plus every chunk's
 * checksum and every channel's sample count, on real store files.
 */
import { afterEach, describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { checkStore, type StoreProblem } from '../../db/check-store.js';
import { openStore } from '../../db/open.js';
import { offsetOf, overwrite, tempDir, writeRun, writeRunInto } from './chunk-store-fixture.js';

const cleanups: (() => void)[] = [];
afterEach(() => {
  for (const c of cleanups.splice(0)) c();
});
function storePath(): string {
  const t = tempDir();
  cleanups.push(t.remove);
  return join(t.dir, 'store.db');
}

describe('checkStore', () => {
  it('finds nothing wrong in a sound store, and counts what it verified', () => {
    const path = storePath();
    const db = openStore(path);
    writeRunInto(db, 10_000);
    writeRunInto(db, 5_000, 8);
    const c = checkStore(db);
    expect(c).toEqual({
      integrity_ok: true, runs: 2, chunks: 2 * (3 + 2), chunks_verified: 10, chunks_unverified: 0, chunks_corrupt: 0,
      samples_checked: 2 * 15_000, problems: [],
    });
    // one run only
    expect(checkStore(db, { runId: 2 })).toMatchObject({ runs: 1, chunks: 4, samples_checked: 10_000 });
    db.close();
  });

  it('reports a chunk whose bytes changed, with run, channel, seq and time span, and hands problems on as found', () => {
    const path = storePath();
    writeRun(path, 9000);
    const ro = openStore(path, { readonly: true });
    const b = (ro.prepare("SELECT value_blob FROM sample_chunks WHERE channel = 'temp_C' AND seq = 1").get() as { value_blob: Buffer }).value_blob;
    ro.close();
    overwrite(path, offsetOf(path, b.subarray(9000, 9064)) + 10, Uint8Array.of(1, 2, 3));
    const db = openStore(path, { readonly: true });
    const seen: StoreProblem[] = [];
    const c = checkStore(db, { onProblem: (p) => seen.push(p) });
    expect(c.integrity_ok).toBe(true); // SQLite cannot see inside a blob
    expect(c.chunks_corrupt).toBe(1);
    expect(c.problems).toEqual(seen);
    expect(c.problems).toHaveLength(1);
    expect(c.problems[0]).toMatchObject({ kind: 'checksum', run: 1, channel: 'temp_C', seq: 1, t0_s: 204.8, t1_s: 409.55, samples: 4096 });
    expect(c.problems[0].message).toMatch(/^run 1, channel temp_C, chunk 1 \(t_s 204\.8 … 409\.55, 4096 samples\): checksum mismatch \(stored CRC-32 0x[0-9a-f]{8}, contents give 0x[0-9a-f]{8}\)$/);
    db.close();
  });

  it('reports a channel that holds a different number of samples than its run records', () => {
    const path = storePath();
    const db = openStore(path);
    const run = writeRunInto(db, 5000);
    db.prepare('UPDATE runs SET samples = 4990 WHERE id = ?').run(run);
    const c = checkStore(db);
    expect(c.problems.map((p) => [p.kind, p.channel, p.samples])).toEqual([['sample-count', 'angle', 5000], ['sample-count', 'temp_C', 5000]]);
    expect(c.problems[0].message).toBe('run 1, channel angle: its chunks hold 5000 samples, the run records 4990');
    db.prepare('DELETE FROM sample_chunks').run();
    expect(checkStore(db).problems.map((p) => p.message)).toEqual(['run 1: no sample chunks, the run records 4990 samples']);
    db.close();
  });

  it('reports a row that points at nothing (foreign keys)', () => {
    const path = storePath();
    const db = openStore(path);
    writeRunInto(db, 100);
    db.pragma('foreign_keys = OFF');
    db.prepare("INSERT INTO events (run_id, t_s, t_ms, kind, severity, message) VALUES (42, 0, 0, 'gap', 'warning', 'x')").run();
    const c = checkStore(db);
    expect(c.problems.map((p) => p.kind)).toEqual(['foreign-key']);
    expect(c.problems[0].message).toMatch(/^events row \d+ refers to a missing runs row$/);
    db.close();
  });

  it('reports damage to SQLite\'s own pages as an integrity problem and goes on with what it can read', () => {
    const path = storePath();
    writeRun(path, 50_000);
    // the root page of sample_chunks: its b-tree page header overwritten
    const ro = openStore(path, { readonly: true });
    const root = (ro.prepare("SELECT rootpage FROM sqlite_master WHERE name = 'sample_chunks'").get() as { rootpage: number }).rootpage;
    ro.close();
    overwrite(path, (root - 1) * 4096, Uint8Array.from({ length: 64 }, (_, i) => (i * 37) & 0xff));
    const db = openStore(path, { readonly: true });
    const c = checkStore(db);
    expect(c.integrity_ok).toBe(false);
    expect(c.problems.length).toBeGreaterThan(0);
    expect(c.problems.some((p) => p.kind === 'integrity')).toBe(true);
    for (const p of c.problems) expect(p.message).not.toContain('\n');
    db.close();
  });
});
