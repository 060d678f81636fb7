import { describe, expect, it } from 'vitest';
import type { DecodeResult } from '../../drivers/decoder.js';
import { FramesDecoder } from '../../drivers/frames-decoder.js';
import { LinesDecoder } from '../../drivers/lines-decoder.js';
import { encodeFrames, encodeLines } from '../../drivers/wire-encode.js';

function lcg(seed: number): () => number {
  let s = seed >>> 0;
  return () => (s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 2 ** 32;
}

function gather(rs: DecodeResult[]): { t: number[]; ch: Record<string, number[]> } {
  const o = { t: [] as number[], ch: {} as Record<string, number[]> };
  for (const r of rs)
    for (const b of r.blocks) {
      o.t.push(...b.t);
      for (const [k, a] of Object.entries(b.channels)) (o.ch[k] ??= []).push(...a!);
    }
  return o;
}

describe('encodeLines', () => {
  it('writes time in the column unit and values as given', () => {
    const text = encodeLines(Float64Array.of(1.5, 2), { a: Float64Array.of(0.25, -3e-7), b: Float64Array.of(1, 2) }, ['t_ms', 'a', '_', 'b']);
    expect(text).toBe('1500,0.25,0,1\n2000,-3e-7,0,2\n');
    expect(encodeLines(Float64Array.of(1), { a: Float64Array.of(1 / 3) }, ['t_us', 'a'], { separator: 'tab', digits: 4 })).toBe('1000000\t0.3333\n');
  });

  it('round-trips through the lines decoder to identical values', () => {
    const rnd = lcg(11);
    const n = 3000;
    const t = new Float64Array(n).map((_, i) => i * 0.01 + rnd() * 1e-3);
    const a = new Float64Array(n).map(() => (rnd() - 0.5) * 10 ** Math.floor(rnd() * 30 - 15));
    const x = new Float64Array(n).map(() => rnd() * 2e-3 - 1e-3);
    for (const sep of [',', ';', 'tab', 'spaces'] as const) {
      const text = encodeLines(t, { a, x_m: x }, ['t_s', 'a', 'x_m'], { separator: sep });
      const d = new LinesDecoder({ columns: ['t_s', 'a', 'x_m'], separator: sep });
      const o = gather([d.push(new TextEncoder().encode(text), 0), d.flush(0)]);
      expect(o.t, sep).toEqual(Array.from(t));
      expect(o.ch.a, sep).toEqual(Array.from(a));
      expect(o.ch.x_m, sep).toEqual(Array.from(x));
    }
  });

  it('round-trips whole milliseconds and microseconds', () => {
    const n = 2000;
    const tms = new Float64Array(n).map((_, i) => (i * 37) / 1000);
    const tus = new Float64Array(n).map((_, i) => (i * 12345 + 7) / 1e6);
    for (const [role, t] of [['t_ms', tms], ['t_us', tus]] as const) {
      const text = encodeLines(t, { a: t }, [role, 'a']);
      const d = new LinesDecoder({ columns: [role, 'a'], separator: ',' });
      const o = gather([d.push(new TextEncoder().encode(text), 0), d.flush(0)]);
      expect(o.t, role).toEqual(Array.from(t));
    }
  });

  it('names a missing column', () => {
    expect(() => encodeLines(Float64Array.of(1), {}, ['t_s', 'counts'])).toThrow(/"counts" has no values/);
  });
});

describe('encodeFrames', () => {
  it('lays a frame out as docs/wire.md says', () => {
    const f = encodeFrames(0x1234, Float64Array.of(2 ** 32 + 5), [Int32Array.of(-2)]);
    expect(f.length).toBe(16);
    // sync, version, channel count, seq LE, µs LE (wrapped to u32), value LE
    expect(Array.from(f.subarray(0, 14))).toEqual([0xa7, 0x3c, 1, 1, 0x34, 0x12, 5, 0, 0, 0, 0xfe, 0xff, 0xff, 0xff]);
    // CRC over bytes 2…13, little-endian, checked against the bitwise definition
    let crc = 0xffff;
    for (const b of f.subarray(2, 14)) {
      crc ^= b << 8;
      for (let k = 0; k < 8; k++) crc = crc & 0x8000 ? ((crc << 1) ^ 0x1021) & 0xffff : (crc << 1) & 0xffff;
    }
    expect(f[14] | (f[15] << 8)).toBe(crc);
  });

  it('round-trips through the frames decoder to identical values', () => {
    const rnd = lcg(3);
    const n = 5000;
    const tus = new Float64Array(n).map((_, i) => 1e9 + i * 250);
    const ch = [0, 1, 2].map(() => new Int32Array(n).map(() => Math.floor((rnd() - 0.5) * 2 ** 32)));
    const bytes = encodeFrames(65000, tus, ch);
    const d = new FramesDecoder({ channels: [{ role: 'a', scale: 1 }, { role: 'b', scale: 1 }, { role: 'counts', scale: 1 }] });
    const o = gather([d.push(bytes, 0), d.flush(0)]);
    expect(o.ch.a).toEqual(Array.from(ch[0]));
    expect(o.ch.b).toEqual(Array.from(ch[1]));
    expect(o.ch.counts).toEqual(Array.from(ch[2]));
    // the decoder multiplies the unwrapped µs by 1e-6
    expect(o.t).toEqual(Array.from(tus, (u) => u * 1e-6));
    expect(d.stats).toMatchObject({ samples: n, badRecords: 0, gaps: 0 });
  });
});
