/**
 * Chunk checksums: every stored chunk carries a CRC-32 over its fields and its
 * blobs as stored; a chunk whose bytes changed on disk is never decoded into
 * numbers but masked (FLAG_INVALID, NaN) and reported, and chunks from before
 * checksums (schema 2) still read, as unverified.
 */
import { afterEach, describe, expect, it } from 'vitest';
import { crc32 } from 'node:zlib';
import { copyFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import { chunkChecksum, encodeChunk, inspectChunk, type CheckedChunkRow } from '../../db/codec.js';
import { migrate } from '../../db/migrations.js';
import { openStore } from '../../db/open.js';
import { checkStore } from '../../db/check-store.js';
import { CorruptChunkError, iterateChunks, readSamples, type ChunkProblem, type SampleChunk } from '../../db/sample-reader.js';
import { FLAG_INVALID, FLAG_SATURATED } from '../../src/domain/block.js';
import { rng } from '../helpers/blocks.js';
import { offsetOf, overwrite, tempDir, writeRun } from './chunk-store-fixture.js';

const cleanups: (() => void)[] = [];
afterEach(() => {
  for (const c of cleanups.splice(0)) c();
});
function storePath(): string {
  const t = tempDir();
  cleanups.push(t.remove);
  return join(t.dir, 'store.db');
}

describe('the CRC-32', () => {
  it('is the standard CRC-32 (ISO-HDLC, zip, PNG): check value 0xCBF43926 for "123456789"', () => {
    // the catalogue's check value: Greg Cook, "Catalogue of parametrised CRC algorithms", CRC-32/ISO-HDLC
    expect(crc32('123456789')).toBe(0xcbf43926);
  });

  it('is computed by encodeChunk and changes with any byte of any blob and with any field', () => {
    const r = rng(5);
    const n = 600;
    const t = Float64Array.from({ length: n }, (_, i) => i * 0.05 + (i > 300 ? r() * 1e-4 : 0)); // ns-varint times
    const v = Float64Array.from({ length: n }, () => r() * 1e-3);
    const f = new Uint8Array(n);
    f[17] = FLAG_SATURATED;
    const c = encodeChunk(t, v, f);
    expect(c.time_blob).not.toBeNull();
    expect(c.flags_blob).not.toBeNull();
    expect(c.crc32).toBe(chunkChecksum(c));
    const row: CheckedChunkRow = { ...c };
    expect(inspectChunk(row).state).toBe('verified');
    for (const blob of ['time_blob', 'value_blob', 'flags_blob'] as const) {
      for (const at of [0, 1, Math.floor(c[blob]!.length / 2), c[blob]!.length - 1]) {
        const b = Buffer.from(c[blob]!);
        b[at] ^= 0x10;
        expect(inspectChunk({ ...row, [blob]: b }), `${blob}[${at}]`).toMatchObject({ state: 'corrupt', problem: 'checksum' });
      }
    }
    for (const [field, value] of [['count', n - 1], ['t0_s', c.t0_s + 1e-9], ['t1_s', 4.3e26], ['value_base', 1], ['deflated', c.deflated ^ 2], ['time_kind', 'uniform']] as const) {
      expect(inspectChunk({ ...row, [field]: value }), field).toMatchObject({ state: 'corrupt', problem: 'checksum' });
    }
    // a chunk without a checksum is decoded, and said to be unverified
    expect(inspectChunk({ ...row, crc32: null }).state).toBe('unverified');
  });
});

describe('reading a store whose bytes changed on disk', () => {
  it('masks the chunk whose value blob was overwritten, reports it once, and returns every other sample exactly', () => {
    const path = storePath();
    const run = writeRun(path, 40_960); // 10 chunks per channel
    const ro = openStore(path, { readonly: true });
    const before = new Map<number, SampleChunk>();
    for (const c of iterateChunks(ro, run, 'angle')) before.set(c.seq, c);
    const blob = ro.prepare("SELECT value_blob FROM sample_chunks WHERE run_id = ? AND channel = 'angle' AND seq = 4").get(run) as { value_blob: Buffer };
    ro.close();
    // 200 random bytes where chunk 4's floats lie on disk (from its 8000th byte: an overflow page of the row)
    const r = rng(9);
    overwrite(path, offsetOf(path, blob.value_blob.subarray(8000, 8064)), Uint8Array.from({ length: 200 }, () => Math.floor(r() * 256)));

    const db = openStore(path, { readonly: true });
    // without a handler, a reader is stopped with one line naming the chunk, never handed garbage
    expect(() => readSamples(db, run, 'angle')).toThrow(CorruptChunkError);
    expect(() => readSamples(db, run, 'angle')).toThrow(/run 1, channel angle, chunk 4 \(t_s 819\.2 … 1023\.95, 4096 samples\): checksum mismatch/);
    const problems: ChunkProblem[] = [];
    const after = [...iterateChunks(db, run, 'angle', { onCorrupt: (p) => problems.push(p) })];
    expect(problems).toHaveLength(1);
    expect(problems[0]).toMatchObject({ run, channel: 'angle', seq: 4, problem: 'checksum', count: 4096, masked: 4096 });
    expect(after.map((c) => c.seq)).toEqual([...before.keys()]);
    for (const c of after) {
      const b = before.get(c.seq)!;
      expect(c.t.length).toBe(b.t.length);
      if (c.seq === 4) {
        expect(c.state).toBe('masked');
        expect(c.flags.every((x) => x === FLAG_INVALID)).toBe(true);
        expect(c.v.every((x) => Number.isNaN(x))).toBe(true);
        // stand-in times span the chunk's own, so nothing shifts
        expect(c.t[0]).toBe(b.t[0]);
        expect(c.t[c.t.length - 1]).toBe(b.t[b.t.length - 1]);
      } else {
        expect(c.state).toBe('verified');
        expect(Array.from(c.v)).toEqual(Array.from(b.v));
        expect(Array.from(c.t)).toEqual(Array.from(b.t));
      }
    }
    // the other channel is intact
    expect(readSamples(db, run, 'temp_C').t.length).toBe(40_960);
    db.close();
  });

  it('random damage (20 × 200 bytes) anywhere in a 10 MB store: no sample comes back wrong, every bad chunk is reported', () => {
    const pristine = storePath();
    const n = 1_250_000; // about 10 MB: 4 bytes per sample and channel
    const run = writeRun(pristine, n, 4);
    const size = statSync(pristine).size;
    expect(size).toBeGreaterThan(9e6);
    const ro = openStore(pristine, { readonly: true });
    const before = new Map<number, Float64Array>();
    for (const c of iterateChunks(ro, run, 'angle')) before.set(c.seq, c.v.slice());
    ro.close();

    let maskedAll = 0;
    let sqliteFound = 0;
    for (const seed of [2026, 7, 11, 12, 13]) {
      const path = storePath();
      copyFileSync(pristine, path);
      const r = rng(seed);
      // past the first page (the header: damage there is a "not a database" failure, tested elsewhere)
      for (let k = 0; k < 20; k++) overwrite(path, 4096 + Math.floor(r() * (size - 4096 - 200)), Uint8Array.from({ length: 200 }, () => Math.floor(r() * 256)));

      const db = openStore(path, { readonly: true });
      const problems: ChunkProblem[] = [];
      let masked = 0;
      try {
        for (const c of iterateChunks(db, run, 'angle', { onCorrupt: (p) => problems.push(p) })) {
          if (c.state === 'masked') {
            masked++;
            expect(c.v.every((x) => Number.isNaN(x)) && c.flags.every((x) => x === FLAG_INVALID)).toBe(true);
            continue;
          }
          // anything not masked is exactly what was written
          expect(Array.from(c.v), `seed ${seed}, chunk ${c.seq}`).toEqual(Array.from(before.get(c.seq)!));
        }
      } catch (e) {
        // damage to SQLite's own pages (b-tree, index) is found by SQLite: told plainly too, never silent
        expect((e as { code?: string }).code, String(e)).toMatch(/^SQLITE_CORRUPT/);
        sqliteFound++;
      }
      expect(masked).toBe(problems.length);
      maskedAll += masked;
      // `check` reports every masked chunk, or SQLite's own finding
      const found = checkStore(db, { runId: run });
      expect(found.problems.length).toBeGreaterThan(0);
      const bad = found.problems.filter((p) => p.kind === 'checksum' && p.channel === 'angle').map((p) => p.seq);
      for (const p of problems) expect(bad).toContain(p.seq);
      db.close();
    }
    // most damage lands in chunk contents, which is what the checksums are for
    expect(maskedAll).toBeGreaterThan(0);
    expect(sqliteFound).toBeLessThan(5);
  });
});

describe('stores from before checksums', () => {
  it('keep reading after the upgrade to schema 3: old chunks are unverified, new ones verified', () => {
    const path = storePath();
    const old = new Database(path);
    migrate(old, 2);
    old.prepare("INSERT INTO stations (name, updated_at) VALUES ('bench-a', 0)").run();
    old.prepare("INSERT INTO fibres (name) VALUES ('W25')").run();
    old.prepare("INSERT INTO runs (station_id, fibre_id, started_at_ms, source, samples) VALUES (1, 1, 0, 'file', 3)").run();
    const { crc32: _, ...c } = encodeChunk(Float64Array.of(0, 0.05, 0.1), Float64Array.of(1e-3, 2e-3, 3e-3), null);
    old.prepare(`INSERT INTO sample_chunks (run_id, channel, seq, t0_s, t1_s, count, time_kind, dt_s, time_blob, value_kind, value_base, value_blob, flags_blob, deflated)
                 VALUES (1, 'angle', 0, @t0_s, @t1_s, @count, @time_kind, @dt_s, @time_blob, @value_kind, @value_base, @value_blob, @flags_blob, @deflated)`).run(c);
    old.close();

    const db = openStore(path);
    expect(db.prepare('SELECT crc32 FROM sample_chunks').get()).toEqual({ crc32: null });
    const chunks = [...iterateChunks(db, 1, 'angle')];
    expect(chunks.map((x) => x.state)).toEqual(['unverified']);
    expect(Array.from(chunks[0].t)).toEqual([0, 0.05, 0.1]);
    const found = checkStore(db);
    expect(found).toMatchObject({ integrity_ok: true, chunks: 1, chunks_unverified: 1, chunks_verified: 0, problems: [] });
    db.close();
  });
});
