/**
 * Runs the virtual balance onto a wire: generates blocks, encodes them in the
 * `lines` or `frames` format with the shared encoders, paces them in real time
 * × speed (one write about every 50 ms of wall time, never per sample), skips
 * dropouts, honours backpressure and stops cleanly on abort.
 */
import { createWriteStream } from 'node:fs';
import { once } from 'node:events';
import type { ColumnRole, ValueRole } from '../../src/domain/block.js';
import { encodeFrames, encodeLines } from '../wire-encode.js';
import type { Scenario } from './scenario.js';
import { DEFAULT_SEED, SimulatorSource, type SimBlock } from './simulate.js';

/** Options of runSimulator. */
export interface RunSimulatorOptions {
  scenario: Scenario;
  /** where the bytes go: a writable stream, a device/file path (opened with flags 'w'), or '-' for stdout */
  out: NodeJS.WritableStream | string;
  /** wire format (default: the scenario's output.format) */
  format?: 'lines' | 'frames';
  /** 1 = real time, 10 = ten times faster; Infinity or 0 = as fast as the sink takes it (default 1) */
  speed?: number;
  /** random seed (default 1) */
  seed?: number;
  /** run length, s (default the scenario's duration_s) */
  duration_s?: number;
  /** stop early, cleanly, when this signal aborts (e.g. on SIGINT) */
  signal?: AbortSignal;
  /** wall-time interval between writes in paced mode, ms (default 50) */
  tick_ms?: number;
  /** samples per block when running as fast as possible (default 4096) */
  blockSamples?: number;
  /** called after each write with the simulated time reached, s, and the totals so far */
  onProgress?: (p: { t_s: number; samples: number; bytes: number; total_samples: number }) => void;
}

/** Default column layout of lines output when the format is switched from frames: t_s plus the channel roles. */
export function linesColumns(sc: Scenario): ColumnRole[] {
  if (sc.output.format === 'lines') return sc.output.columns;
  return ['t_s', ...sc.output.channels.map((c) => c.role)];
}

/** Default channels of frames output when the format is switched from lines: the value columns, scale 1 except for angles (1e-9 rad) and metres (1e-9 m), temperature (1e-4 °C). */
export function framesChannels(sc: Scenario): { role: ColumnRole; scale: number }[] {
  if (sc.output.format === 'frames') return sc.output.channels;
  const scale: Partial<Record<string, number>> = { angle_rad: 1e-9, x_m: 1e-9, temp_C: 1e-4, a: 1e-6, b: 1e-6 };
  return sc.output.columns.filter((c) => !['t_s', 't_ms', 't_us'].includes(c)).map((role) => ({ role, scale: scale[role] ?? 1 }));
}

/** The encoder for one block's kept runs: returns the bytes of those samples. */
function makeEncoder(sc: Scenario, format: 'lines' | 'frames'): (b: SimBlock, from: number, to: number) => Uint8Array {
  if (format === 'lines') {
    const columns = linesColumns(sc);
    const digits = sc.output.digits;
    return (b, from, to) => {
      const cols: Partial<Record<ValueRole, Float64Array>> = {};
      for (const [k, v] of Object.entries(b.channels) as [ValueRole, Float64Array][]) cols[k] = v.subarray(from, to);
      return Buffer.from(encodeLines(b.t.subarray(from, to), cols, columns, { digits }), 'utf8');
    };
  }
  const channels = framesChannels(sc);
  return (b, from, to) => {
    const n = to - from;
    const tMicros = new Float64Array(n);
    for (let i = 0; i < n; i++) tMicros[i] = Math.round(b.t[from + i] * 1e6);
    const values = channels.map((c) => {
      const src = c.role === '_' ? undefined : b.channels[c.role as ValueRole];
      const o = new Int32Array(n);
      if (!src) return o;
      for (let i = 0; i < n; i++) {
        const r = Math.round(src[from + i] / c.scale);
        o[i] = r > 2147483647 ? 2147483647 : r < -2147483648 ? -2147483648 : r;
      }
      return o;
    });
    // the device counts every frame, also those lost in a dropout: the decoder sees the jump as a gap
    return encodeFrames(b.i0 + from, tMicros, values);
  };
}

/** The header comment of lines output: declares the columns (docs/wire.md `# columns:`). */
function linesHeader(sc: Scenario): Uint8Array {
  return Buffer.from(`# fibrewatch simulator: scenario ${sc.name}\n# columns: ${linesColumns(sc).join(',')}\n`, 'utf8');
}

function sleep(ms: number, signal?: AbortSignal): Promise<void> {
  return new Promise((resolve) => {
    if (signal?.aborted) return resolve();
    const timer = setTimeout(done, ms);
    function done(): void {
      clearTimeout(timer);
      signal?.removeEventListener('abort', done);
      resolve();
    }
    signal?.addEventListener('abort', done, { once: true });
  });
}

/** Write and wait for 'drain' when the stream asks for it (or abort/close). */
async function writeChunk(stream: NodeJS.WritableStream, bytes: Uint8Array, signal?: AbortSignal): Promise<void> {
  if (bytes.length === 0) return;
  if (stream.write(bytes)) return;
  const ac = new AbortController();
  const onAbort = (): void => ac.abort();
  signal?.addEventListener('abort', onAbort, { once: true });
  try {
    await Promise.race([once(stream as NodeJS.EventEmitter, 'drain', { signal: ac.signal }), once(stream as NodeJS.EventEmitter, 'close', { signal: ac.signal })]);
  } catch (e) {
    if ((e as Error).name !== 'AbortError') throw e;
  } finally {
    ac.abort();
    signal?.removeEventListener('abort', onAbort);
  }
}

/**
 * Run the scenario onto `out`; resolves when the run is done or aborted with
 * the samples and bytes written. A stream opened here from a path is ended;
 * a stream passed in (and stdout) is left open.
 */
export async function runSimulator(opts: RunSimulatorOptions): Promise<{ samples: number; bytes: number }> {
  const sc = opts.scenario;
  const format = opts.format ?? sc.output.format;
  const speed = opts.speed ?? 1;
  if (!(speed >= 0)) throw new TypeError(`speed: must be ≥ 0 (0 or Infinity = as fast as possible), got ${speed}`);
  const fast = speed === 0 || speed === Infinity;
  const tick = opts.tick_ms ?? 50;
  const src = new SimulatorSource(sc, opts.seed ?? DEFAULT_SEED, opts.duration_s);
  const encode = makeEncoder(sc, format);
  const signal = opts.signal;

  let stream: NodeJS.WritableStream;
  let owned = false;
  if (typeof opts.out === 'string') {
    if (opts.out === '-') stream = process.stdout;
    else {
      const ws = createWriteStream(opts.out, { flags: 'w' });
      await Promise.race([once(ws, 'open'), once(ws, 'error').then(([e]) => { throw e; })]);
      stream = ws;
      owned = true;
    }
  } else stream = opts.out;
  let streamError: Error | undefined;
  const onError = (e: Error): void => { streamError = e; };
  stream.on('error', onError);

  let samples = 0;
  let bytes = 0;
  const emit = async (chunk: Uint8Array): Promise<void> => {
    await writeChunk(stream, chunk, signal);
    bytes += chunk.length;
  };
  try {
    if (format === 'lines') await emit(linesHeader(sc));
    const start = performance.now();
    const fs = sc.sample_rate_Hz;
    const cap = opts.blockSamples ?? 4096;
    while (src.remaining > 0 && !signal?.aborted && !streamError) {
      let want: number;
      if (fast) want = cap;
      else {
        // samples due by now in simulated time (speed × wall time)
        const due = Math.floor((((performance.now() - start) / 1000) * speed) * fs) + 1;
        want = Math.min(due - src.balance.index, 1 << 16);
      }
      if (want > 0) {
        const b = src.next(want);
        // split the block into runs of kept samples; dropouts write nothing
        const parts: Uint8Array[] = [];
        let i = 0;
        while (i < b.n) {
          while (i < b.n && !b.keep[i]) i++;
          const from = i;
          while (i < b.n && b.keep[i]) i++;
          if (i > from) {
            parts.push(encode(b, from, i));
            samples += i - from;
          }
        }
        if (parts.length > 0) await emit(parts.length === 1 ? parts[0] : Buffer.concat(parts));
        opts.onProgress?.({ t_s: b.n > 0 ? b.t[b.n - 1] : 0, samples, bytes, total_samples: src.total });
      }
      if (fast) await new Promise<void>((r) => setImmediate(r)); // let signals and other I/O through
      else if (src.remaining > 0 && (want <= 0 || want < 1 << 16)) await sleep(tick, signal);
    }
    if (streamError) throw streamError;
  } finally {
    stream.off('error', onError);
    if (owned) {
      const ws = stream as NodeJS.WritableStream & { destroyed?: boolean };
      if (!ws.destroyed) {
        ws.end();
        await once(ws as NodeJS.EventEmitter, 'close').catch(() => undefined);
      }
    }
  }
  return { samples, bytes };
}
