/**
 * Decode a whole recorded file into arrays (for the one-shot `fit`): the same
 * decoders, sensor conversion and guard against bad device times as live
 * acquisition.
 */
import type { AngleBlock } from '../domain/block.js';
import type { Incident } from '../domain/events.js';
import type { Station } from '../config/station.js';
import { makeDecoder } from '../../drivers/make-decoder.js';
import { makeConverter } from '../../drivers/sensor.js';
import { replayFile } from '../../drivers/replay.js';
import { HoleFiller } from '../analysis/hole-filler.js';
import { ClockGuard, type GuardResult } from '../../drivers/clock-guard.js';

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

/**
 * A block without its clock-fault samples: their stored time is a placeholder,
 * so here they become a hole, which the hole filler puts back masked at the
 * time the grid gives it.
 */
function withoutFaults(b: AngleBlock, faults: Uint8Array): AngleBlock {
  let n = 0;
  for (let i = 0; i < b.n; i++) if (!faults[i]) n++;
  const pick = <T extends Float64Array | Uint8Array>(v: T, make: (n: number) => T): T => {
    const o = make(n);
    for (let i = 0, j = 0; i < b.n; i++) if (!faults[i]) o[j++] = v[i];
    return o;
  };
  const channels: Record<string, Float64Array> = {};
  for (const [k, v] of Object.entries(b.channels)) if (v) channels[k] = pick(v, (m) => new Float64Array(m));
  return { ...b, n, t: pick(b.t, (m) => new Float64Array(m)), angle: pick(b.angle, (m) => new Float64Array(m)), flags: pick(b.flags, (m) => new Uint8Array(m)), channels };
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
  const guard = new ClockGuard();
  const take = (c: AngleBlock): void => {
    // lost lines leave holes: masked placeholders keep the grid uniform for the FFT seed
    const h = holes.process(c.t, c.angle, c.flags, c.channels as Record<string, Float64Array | undefined>, c.n);
    t.push(h.t, h.n);
    a.push(h.y, h.n);
    f.push(h.flags, h.n);
    const tc = h.channels.temp_C;
    if (tc) sawTemp = true;
    temp.push(tc ?? new Float64Array(h.n).fill(NaN), h.n);
  };
  const guarded = (g: GuardResult): void => {
    incidents.push(...g.incidents);
    for (const x of g.blocks) take(x.faults ? withoutFaults(x.block, x.faults) : x.block);
  };
  await replayFile(path, decoder, (r) => {
    incidents.push(...r.incidents);
    for (const raw of r.blocks) guarded(guard.push(convert(raw)));
  });
  guarded(guard.flush(Date.now()));
  const tt = t.done();
  const t0 = tt.length ? tt[0] : 0;
  for (let i = 0; i < tt.length; i++) tt[i] -= t0;
  return { t: tt, angle: a.done(), flags: f.done(), temp: sawTemp ? temp.done() : undefined, incidents, badRecords: decoder.stats.badRecords };
}
