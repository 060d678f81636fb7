/**
 * Benchmark of the sample store: 10 M samples of a realistic angle signal
 * (damped sine, 1e-3 rad, plus 1e-7 rad noise, uniform 20 Hz) through
 * SampleWriter into a temporary SQLite file.
 *
 * Prints and returns: store throughput (samples/s, writer calls only — signal
 * generation is not timed) and bytes on disk per angle sample after a
 * checkpoint. Goals: ≥ 5e6 samples/s, ≤ 6 bytes/sample.
 *
 * Run alone: npx tsx bench/store.ts
 */
import { mkdtempSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { performance } from 'node:perf_hooks';
import { pathToFileURL } from 'node:url';
import { checkpoint, openStore } from '../db/open.js';
import { createRun } from '../db/runs.js';
import { SampleWriter } from '../db/sample-writer.js';
import { rng } from '../test/helpers/blocks.js';


export interface BenchStoreOptions {
  /** samples to write; default 10 000 000 */
  samples?: number;
  /** samples per append call (one block); default 1000 */
  block?: number;
  /** SampleWriter's deflateFloats (shuffle + deflate the float blobs); default false */
  deflateFloats?: boolean;
}

/** Write the signal through SampleWriter and measure throughput and size; returns the figures. */
export async function benchStore(opts: BenchStoreOptions = {}): Promise<Record<string, number>> {
  const N = opts.samples ?? 10_000_000;
  const B = opts.block ?? 1000;
  const dir = mkdtempSync(join(tmpdir(), 'fw-bench-store-'));
  const path = join(dir, 'bench.db');
  try {
    const db = openStore(path);
    const run = createRun(db, { station: 'bench', fibre: { name: 'bench-fibre' }, startedAt_ms: Date.UTC(2026, 0, 1), source: 'simulator', clock: 'device' });
    const w = new SampleWriter(db, run, { deflateFloats: opts.deflateFloats ?? false });
    const rnd = rng(42);
    const t = new Float64Array(B);
    const angle = new Float64Array(B);
    const fs = 20; // Hz
    const T = 9.3; // period, s
    const tau = 86_400; // amplitude decay time, s (Q ≈ 3e4)
    const eq = 0.012; // equilibrium, rad
    let spare: number | null = null;
    const gauss = (): number => {
      if (spare !== null) { const s = spare; spare = null; return s; }
      const u = 1 - rnd();
      const v = rnd();
      const r = Math.sqrt(-2 * Math.log(u));
      spare = r * Math.sin(2 * Math.PI * v);
      return r * Math.cos(2 * Math.PI * v);
    };
    let store_ms = 0;
    for (let i0 = 0; i0 < N; i0 += B) {
      const k = Math.min(B, N - i0);
      for (let j = 0; j < k; j++) {
        const ts = (i0 + j) / fs;
        t[j] = ts;
        angle[j] = eq + 1e-3 * Math.exp(-ts / tau) * Math.cos((2 * Math.PI * ts) / T) + 1e-7 * gauss();
      }
      const a = performance.now();
      w.append(t, { angle }, undefined, k);
      w.flushIfDue(Date.now());
      store_ms += performance.now() - a;
    }
    const a = performance.now();
    w.flush();
    store_ms += performance.now() - a;
    const c0 = performance.now();
    checkpoint(db);
    const checkpoint_ms = performance.now() - c0;
    const rows = (db.prepare('SELECT COUNT(*) AS n FROM sample_chunks').get() as { n: number }).n;
    const payload = (db.prepare('SELECT SUM(LENGTH(value_blob)) AS b FROM sample_chunks').get() as { b: number }).b;
    db.close();
    const fileBytes = statSync(path).size;
    const figures = {
      samples: N,
      store_seconds: store_ms / 1000,
      store_samples_per_s: N / (store_ms / 1000),
      checkpoint_seconds: checkpoint_ms / 1000,
      chunk_rows: rows,
      value_bytes_per_sample: payload / N,
      file_bytes: fileBytes,
      file_bytes_per_sample: fileBytes / N,
    };
    return figures;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  const f = await benchStore();
  console.log(`store: ${f.samples.toExponential(2)} samples in ${f.store_seconds.toFixed(2)} s → ${(f.store_samples_per_s / 1e6).toFixed(2)} M samples/s (goal ≥ 5)`);
  console.log(`store: ${f.file_bytes} bytes on disk → ${f.file_bytes_per_sample.toFixed(3)} bytes/sample (goal ≤ 6); value blobs ${f.value_bytes_per_sample.toFixed(3)} B/sample; ${f.chunk_rows} chunk rows`);
  console.log(JSON.stringify(f));
}
