/**
 * Decode a whole recorded file into arrays (for the one-shot `fit`): the same
 * decoders and sensor conversion as live acquisition.
 */
import type { AngleBlock } from '../domain/block.js';
import type { Incident } from '../domain/events.js';
import type { Station } from '../config/station.js';
import { makeDecoder } from '../../drivers/make-decoder.js';
import { makeConverter } from '../../drivers/sensor.js';
import { replayFile } from '../../drivers/replay.js';
import { HoleFiller } from '../analysis/hole-filler.js';

export interface Recording {
  t: Float64Array;
  angle: Float64Array;
  flags: Uint8Array;
  temp?: Float64Array;
  incidents: Incident[];
  badRecords: number;
}

/** Growable typed array (amortised doubling), to gather blocks without per-sample objects. */
class Grow<T extends Float64Array<ArrayBufferLike> | Uint8Array<ArrayBufferLike>> {
  private buf: T;
  n = 0;
  constructor(private readonly make: (n: number) => T) {
    this.buf = make(4096);
  }
  push(src: T, n: number): void {
    if (this.n + n > this.buf.length) {
      const b = this.make(Math.max(this.buf.length * 2, this.n + n));
      b.set(this.buf.subarray(0, this.n) as never);
      this.buf = b;
    }
    this.buf.set(src.subarray(0, n) as never, this.n);
    this.n += n;
  }
  done(): T {
    return this.buf.subarray(0, this.n) as T;
  }
}

/** Read a recording; times are rebased so the first sample is at t = 0. */
export async function readRecording(path: string, station: Station): Promise<Recording> {
  const decoder = makeDecoder(station);
  const convert = makeConverter(station.sensor);
  const t = new Grow<Float64Array>((n) => new Float64Array(n));
  const a = new Grow<Float64Array>((n) => new Float64Array(n));
  const f = new Grow<Uint8Array>((n) => new Uint8Array(n));
  const temp = new Grow<Float64Array>((n) => new Float64Array(n));
  const incidents: Incident[] = [];
  let sawTemp = false;
  const holes = new HoleFiller();
  await replayFile(path, decoder, (r) => {
    incidents.push(...r.incidents);
    for (const raw of r.blocks) {
      const c: AngleBlock = convert(raw);
      // lost lines leave holes: masked placeholders keep the grid uniform for the FFT seed
      const h = holes.process(c.t, c.angle, c.flags, c.channels as Record<string, Float64Array | undefined>, c.n);
      const b = { ...c, n: h.n, t: h.t, angle: h.y, flags: h.flags, channels: h.channels };
      t.push(b.t, b.n);
      a.push(b.angle, b.n);
      f.push(b.flags, b.n);
      const tc = b.channels.temp_C;
      if (tc) sawTemp = true;
      temp.push(tc ?? new Float64Array(b.n).fill(NaN), b.n);
    }
  });
  const tt = t.done();
  const t0 = tt.length ? tt[0] : 0;
  for (let i = 0; i < tt.length; i++) tt[i] -= t0;
  return { t: tt, angle: a.done(), flags: f.done(), temp: sawTemp ? temp.done() : undefined, incidents, badRecords: decoder.stats.badRecords };
}
