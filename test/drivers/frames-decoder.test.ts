import { describe, expect, it } from 'vitest';
import type { Incident } from '../../src/domain/events.js';
import type { DecodeResult } from '../../drivers/decoder.js';
import { FramesDecoder } from '../../drivers/frames-decoder.js';
import { encodeFrames } from '../../drivers/wire-encode.js';

interface Out {
  t: number[];
  ch: Record<string, number[]>;
  incidents: Incident[];
}

function collect(rs: DecodeResult[]): Out {
  const o: Out = { t: [], ch: {}, incidents: [] };
  for (const r of rs) {
    o.incidents.push(...r.incidents);
    for (const b of r.blocks) {
      expect(b.clock).toBe('device');
      o.t.push(...b.t);
      for (const [k, a] of Object.entries(b.channels)) (o.ch[k] ??= []).push(...a!);
    }
  }
  return o;
}

function run(d: FramesDecoder, chunks: Uint8Array[], host_ms = 0): Out {
  const rs = chunks.map((c) => d.push(c, host_ms));
  rs.push(d.flush(host_ms));
  return collect(rs);
}

function concat(...parts: Uint8Array[]): Uint8Array {
  const out = new Uint8Array(parts.reduce((s, p) => s + p.length, 0));
  let o = 0;
  for (const p of parts) {
    out.set(p, o);
    o += p.length;
  }
  return out;
}

/** n frames, 1 kHz, two channels (i and −3i). */
function frames(startSeq: number, n: number, t0us = 0, i0 = 0): Uint8Array {
  const t = new Float64Array(n).map((_, i) => t0us + (i0 + i) * 1000);
  const a = new Int32Array(n).map((_, i) => i0 + i);
  const b = new Int32Array(n).map((_, i) => -3 * (i0 + i));
  return encodeFrames(startSeq, t, [a, b]);
}

const channels = [
  { role: 'a' as const, scale: 0.5 },
  { role: 'b' as const, scale: 1e-6 },
];

describe('FramesDecoder', () => {
  it('decodes frames: device time in seconds, values times their scale', () => {
    const d = new FramesDecoder({ channels });
    const o = run(d, [frames(10, 5)]);
    expect(o.t).toEqual([0, 0.001, 0.002, 0.003, 0.004]);
    expect(o.ch.a).toEqual([0, 0.5, 1, 1.5, 2]);
    expect(o.ch.b).toEqual([0, 1, 2, 3, 4].map((i) => (i === 0 ? 0 : -3 * i * 1e-6))); // raw −3i times the scale
    expect(o.incidents).toEqual([]);
    expect(d.stats).toEqual({ samples: 5, badRecords: 0, gaps: 0, lostFrames: 0 });
  });

  it('drops a frame with a bad CRC and keeps every good one', () => {
    const good = frames(0, 20);
    const fl = 12 + 8;
    const broken = good.slice();
    broken[7 * fl + 12] ^= 0x40; // a value bit of frame 7
    const d = new FramesDecoder({ channels });
    const o = run(d, [broken]);
    expect(o.ch.a).toEqual(Array.from({ length: 20 }, (_, i) => i * 0.5).filter((_, i) => i !== 7));
    expect(d.stats.badRecords).toBe(1);
    expect(o.incidents.filter((i) => i.kind === 'bad-input').map((i) => i.data!.reason)).toEqual(['CRC mismatch']);
    // the lost frame shows up as a one-frame gap too
    expect(o.incidents.filter((i) => i.kind === 'gap').map((i) => i.data!.lost_frames)).toEqual([1]);
  });

  it('resynchronises after garbage and a truncated frame', () => {
    const a = frames(0, 3);
    const torn = frames(3, 1).subarray(0, 11); // a frame cut short mid-values
    const junk = new Uint8Array([0x00, 0xa7, 0xa7, 0x3c, 0x02, 0x01, 0xff, 0xa7]);
    const b = frames(4, 3, 0, 4);
    const d = new FramesDecoder({ channels });
    const o = run(d, [concat(junk, a, torn, junk, b)]);
    expect(o.ch.a).toEqual([0, 0.5, 1, 2, 2.5, 3]);
    expect(d.stats.samples).toBe(6);
    expect(d.stats.badRecords).toBeGreaterThanOrEqual(2);
    expect(o.incidents.find((i) => i.kind === 'gap')!.data!.lost_frames).toBe(1);
  });

  it('reports a sequence jump as a gap with the number of lost frames and its duration', () => {
    const d = new FramesDecoder({ channels });
    const o = run(d, [concat(frames(100, 50), frames(150 + 37, 10, 0, 50 + 37))]);
    const gaps = o.incidents.filter((i) => i.kind === 'gap');
    expect(gaps.length).toBe(1);
    expect(gaps[0].data!.lost_frames).toBe(37);
    expect(gaps[0].data!.duration_s as number).toBeCloseTo(0.037, 9);
    expect(gaps[0].t).toBeCloseTo(0.049, 12);
    expect(d.stats).toMatchObject({ samples: 60, gaps: 1, lostFrames: 37 });
  });

  it('counts the sequence wraps a long gap hides, from the device clock', () => {
    const d = new FramesDecoder({ channels });
    // 70000 frames lost: the sequence number shows only 70000 − 65536
    const o = run(d, [concat(frames(0, 20), frames(20 + 70000, 5, 0, 20 + 70000))]);
    expect(o.incidents.find((i) => i.kind === 'gap')!.data!.lost_frames).toBe(70000);
    expect(d.stats.lostFrames).toBe(70000);
  });

  it('treats sequence and µs clock wraps as no gap and keeps time monotonic', () => {
    const d = new FramesDecoder({ channels: [{ role: 'counts', scale: 1 }] });
    // start 3 s before the u32 µs wrap (2^32 µs ≈ 4295 s) and 20 frames before the u16 wrap
    const n = 8000;
    const t0 = 2 ** 32 - 3e6;
    const t = new Float64Array(n).map((_, i) => t0 + i * 1000);
    const bytes = encodeFrames(65536 - 20, t, [new Int32Array(n).map((_, i) => i)]);
    const o = run(d, [bytes.subarray(0, 70_001), bytes.subarray(70_001)]);
    expect(o.incidents).toEqual([]);
    expect(o.t.length).toBe(n);
    let worst = 0;
    for (let i = 1; i < n; i++) worst = Math.max(worst, Math.abs(o.t[i] - o.t[i - 1] - 0.001));
    expect(worst).toBeLessThan(1e-9);
    expect(o.t[n - 1]).toBeCloseTo((t0 + (n - 1) * 1000) / 1e6, 9);
    expect(o.ch.counts[n - 1]).toBe(n - 1);
  });

  it('gives identical output however the input is split', () => {
    const junk = new Uint8Array([0x11, 0xa7, 0x3c]);
    const bytes = concat(frames(0, 3), junk, frames(3, 2, 0, 3), frames(9, 2, 0, 9), frames(11, 1).subarray(0, 9));
    const whole = run(new FramesDecoder({ channels }), [bytes]);
    expect(whole.ch.a.length).toBe(7);
    for (let k = 0; k <= bytes.length; k++) {
      const s = run(new FramesDecoder({ channels }), [bytes.subarray(0, k), bytes.subarray(k)]);
      expect(s, `split at ${k}`).toEqual(whole);
    }
    const bytewise = run(new FramesDecoder({ channels }), Array.from(bytes, (_, i) => bytes.subarray(i, i + 1)));
    expect(bytewise).toEqual(whole);
  });

  it('rejects frames whose channel count differs from the station', () => {
    const one = encodeFrames(0, Float64Array.of(0, 1000), [Int32Array.of(1, 2)]);
    const d = new FramesDecoder({ channels });
    const o = run(d, [concat(frames(0, 2), one, frames(2, 2, 0, 2))]);
    expect(o.ch.a).toEqual([0, 0.5, 1, 1.5]);
    expect(d.stats.badRecords).toBe(2);
    expect(o.incidents[0].data!.reason).toBe('frame has 1 channels, the station 2');
  });

  it('keeps a torn frame across chunks in a capped tail and reports one left at the end', () => {
    const d = new FramesDecoder({ channels });
    const b = frames(0, 2);
    const r1 = d.push(b.subarray(0, 25), 0);
    expect((d as unknown as { tail: Uint8Array }).tail.length).toBe(5);
    const r2 = d.push(b.subarray(25, 35), 0);
    const o = collect([r1, r2, d.flush(0)]);
    expect(o.ch.a).toEqual([0]);
    expect(o.incidents.map((i) => i.data!.reason)).toEqual(['torn frame at end of input']);
  });

  it('skips a repeated frame without calling it a gap', () => {
    const d = new FramesDecoder({ channels });
    const o = run(d, [concat(frames(0, 3), frames(2, 1, 0, 2), frames(3, 2, 0, 3))]);
    expect(o.ch.a).toEqual([0, 0.5, 1, 1.5, 2]);
    expect(d.stats.gaps).toBe(0);
    expect(d.stats.badRecords).toBe(1);
  });

  it('keeps time monotonic when the device clock goes back (a restart) and says so', () => {
    const d = new FramesDecoder({ channels });
    // 30 frames up to 2.029 s, then the device restarts: sequence and clock from 0 again
    const o = run(d, [concat(frames(0, 30, 2e6), frames(0, 10))]);
    expect(o.t.length).toBe(40);
    for (let i = 1; i < 40; i++) expect(o.t[i]).toBeGreaterThan(o.t[i - 1]);
    expect(o.t[30]).toBeCloseTo(2.029 + 0.001, 9);
    expect(o.t[39] - o.t[30]).toBeCloseTo(0.009, 9);
    const note = o.incidents.find((i) => i.kind === 'clock-note')!;
    expect(note.data!.step_s as number).toBeCloseTo(2.029, 9);
    expect(d.stats.gaps).toBe(0); // a restart, not 65506 lost frames
  });
});
