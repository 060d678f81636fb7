/**
 * Signal-conditioning benchmark: throughput of clean (Hampel despike, gap
 * marks) and condition (8th-order Butterworth + decimation) over 12 M samples
 * in blocks of 4096, as samples per second, plus the heap growth over the run.
 * Run alone: `npx tsx bench/condition.ts`.
 */
import { pathToFileURL } from 'node:url';
import { Observable } from 'rxjs';
import type { AngleBlock } from '../src/domain/block.js';
import { chooseDecimationFactor } from '../src/analysis/decimate.js';
import { clean } from '../pipelines/clean.js';
import { condition } from '../pipelines/condition.js';

const N = 12_000_000;
const BLOCK = 4096;
const DT = 0.01; // 100 Hz
const PERIOD = 60; // s, our own demo swing

/** A 100 Hz record of a 60 s swing with a glitch every 10 000 samples and one gap: generated block by block. */
function source(): Observable<AngleBlock> {
  return new Observable<AngleBlock>((sub) => {
    for (let i0 = 0; i0 < N && !sub.closed; i0 += BLOCK) {
      const n = Math.min(BLOCK, N - i0);
      const t = new Float64Array(n);
      const angle = new Float64Array(n);
      for (let i = 0; i < n; i++) {
        const k = i0 + i;
        t[i] = k * DT + (k >= N / 2 ? 30 : 0);
        angle[i] = 2e-3 * Math.cos((2 * Math.PI * t[i]) / PERIOD) + 1e-4 + (k % 10_000 === 17 ? 5e-3 : 0);
      }
      sub.next({ n, t, angle, flags: new Uint8Array(n), channels: {}, clock: 'device', host_ms: 0 });
    }
    sub.complete();
  });
}

/** Run a pipeline over the source; returns samples/s of wall time and the output sample count. */
function measure(pipe: (s: Observable<AngleBlock>) => Observable<AngleBlock>): { rate: number; out: number; heapGrowth_MB: number } {
  globalThis.gc?.();
  const h0 = process.memoryUsage().heapUsed;
  let out = 0;
  const t0 = performance.now();
  pipe(source()).subscribe((b) => (out += b.n));
  const s = (performance.now() - t0) / 1000;
  globalThis.gc?.();
  return { rate: N / s, out, heapGrowth_MB: (process.memoryUsage().heapUsed - h0) / 2 ** 20 };
}

/** Throughput figures of clean, condition and both, samples per second. */
export async function benchCondition(): Promise<Record<string, number>> {
  const factor = chooseDecimationFactor(PERIOD, DT, 20);
  const cleanOp = () => clean({ hampelHalfWidth: 5, hampelThreshold: 5 });
  const condOp = () => condition({ factor });
  measure((s) => s.pipe(cleanOp(), condOp())); // warm the JIT
  const gen = measure((s) => s);
  const c = measure((s) => s.pipe(cleanOp()));
  const d = measure((s) => s.pipe(condOp()));
  const both = measure((s) => s.pipe(cleanOp(), condOp()));
  const figures: Record<string, number> = {
    source_only_samples_per_s: gen.rate,
    clean_samples_per_s: c.rate,
    condition_samples_per_s: d.rate,
    clean_condition_samples_per_s: both.rate,
    clean_condition_out_samples: both.out,
    decimation_factor: factor,
  };
  console.log(`clean (Hampel k=5) + condition (Butterworth order 8, M=${factor}), ${N / 1e6} M samples at 100 Hz in blocks of ${BLOCK} (includes generating the data):`);
  for (const [k, v] of Object.entries(figures)) console.log(`  ${k.padEnd(34)} ${k.endsWith('per_s') ? `${(v / 1e6).toFixed(2)} M` : v}`);
  console.log(`  heap growth over a clean+condition run: ${both.heapGrowth_MB.toFixed(1)} MB`);
  return figures;
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  benchCondition().catch((e) => {
    console.error(e);
    process.exit(1);
  });
}
