/**
 * A real store file in the OS temp dir with one run of a realistic angle
 * signal (20 Hz, a 9.3 s swing of 1e-3 rad, 1e-7 rad noise, seeded) and a
 * temperature channel, written by the SampleWriter; plus the tools to damage
 * it the way a failing disk does: bytes overwritten in place.
 */
import { closeSync, mkdtempSync, openSync, readFileSync, rmSync, writeSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Database } from 'better-sqlite3';
import { openStore } from '../../db/open.js';
import { createRun } from '../../db/runs.js';
import { SampleWriter } from '../../db/sample-writer.js';
import { normals } from '../helpers/blocks.js';

/** A fresh folder in the OS temp dir, removed by the returned function. */
export function tempDir(prefix = 'fw-db-'): { dir: string; remove: () => void } {
  const dir = mkdtempSync(join(tmpdir(), prefix));
  return { dir, remove: () => rmSync(dir, { recursive: true, force: true }) };
}

/** Write `n` samples of run 1 (channels angle and temp_C) into a new store at `path`; returns the run id. */
export function writeRun(path: string, n: number, seed = 3): number {
  const db = openStore(path);
  try {
    return writeRunInto(db, n, seed);
  } finally {
    db.close();
  }
}

/** The same into an open store. */
export function writeRunInto(db: Database, n: number, seed = 3): number {
  const run = createRun(db, { station: 'bench-c', fibre: { name: 'QZ-9' }, startedAt_ms: Date.UTC(2026, 2, 1), source: 'simulator', clock: 'device' });
  const w = new SampleWriter(db, run);
  const g = normals(seed);
  const B = 1000;
  const t = new Float64Array(B);
  const a = new Float64Array(B);
  const temp = new Float64Array(B);
  for (let i0 = 0; i0 < n; i0 += B) {
    const k = Math.min(B, n - i0);
    for (let j = 0; j < k; j++) {
      const ts = (i0 + j) / 20;
      t[j] = ts;
      a[j] = 0.012 + 1e-3 * Math.cos((2 * Math.PI * ts) / 9.3) + 1e-7 * g();
      temp[j] = 21.5 + 1e-3 * g();
    }
    w.append(t, { angle: a, temp_C: temp }, undefined, k);
  }
  w.flush();
  return run;
}

/** Overwrite bytes of the file at `offset` (a failing disk, a stray write). */
export function overwrite(path: string, offset: number, bytes: Uint8Array): void {
  const fd = openSync(path, 'r+');
  try {
    writeSync(fd, bytes, 0, bytes.length, offset);
  } finally {
    closeSync(fd);
  }
}

/** Where `needle` (at least 16 bytes, so the match is unique in practice) lies in the file; throws when absent. */
export function offsetOf(path: string, needle: Uint8Array): number {
  const at = readFileSync(path).indexOf(needle);
  if (at < 0) throw new Error(`${path}: bytes not found`);
  return at;
}
