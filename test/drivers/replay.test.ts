import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import type { DecodeResult, Decoder } from '../../drivers/decoder.js';
import { makeDecoder } from '../../drivers/make-decoder.js';
import { FramesDecoder } from '../../drivers/frames-decoder.js';
import { LinesDecoder } from '../../drivers/lines-decoder.js';
import { replayFile } from '../../drivers/replay.js';
import { encodeFrames } from '../../drivers/wire-encode.js';
import { parseStation } from '../../src/config/station.js';

const fixture = fileURLToPath(new URL('../fixtures/wire/mixed-lines.csv', import.meta.url));
const dir = mkdtempSync(join(tmpdir(), 'fibrewatch-replay-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function flatten(rs: DecodeResult[]) {
  const t: number[] = [];
  const ch: Record<string, number[]> = {};
  let bad = 0;
  for (const r of rs) {
    for (const i of r.incidents) if (i.kind === 'bad-input') bad += i.data!.count as number;
    for (const b of r.blocks) {
      t.push(...b.t);
      for (const [k, a] of Object.entries(b.channels)) (ch[k] ??= []).push(...a!);
    }
  }
  return { t, ch, bad };
}

/** Wraps a real decoder to record the chunk sizes it is handed. */
function recording(d: Decoder): { d: Decoder; sizes: number[] } {
  const sizes: number[] = [];
  return {
    sizes,
    d: {
      push: (c, h) => (sizes.push(c.length), d.push(c, h)),
      flush: (h) => d.flush(h),
      resync: () => d.resync(),
      get stats() {
        return d.stats;
      },
    },
  };
}

describe('replayFile', () => {
  it('streams a recorded lines file through the decoder in chunks', async () => {
    for (const chunkBytes of [1, 7, 64, 1 << 20]) {
      const rs: DecodeResult[] = [];
      const progress: [number, number][] = [];
      const { d, sizes } = recording(new LinesDecoder({ separator: ',' }));
      await replayFile(fixture, d, (r) => rs.push(r), { chunkBytes, onProgress: (a, b) => progress.push([a, b]) });
      const o = flatten(rs);
      expect(o.t, `chunk ${chunkBytes}`).toEqual([0, 0.1, 0.2, 0.4, 0.5, 0.7, 0.8, 0.9]);
      expect(o.ch.a).toEqual([1, 1.2, 1.35, 1.1, 0.9, 0.7, 0.8, 1]);
      expect(o.ch.temp_C).toEqual([21.5, 21.5, 21.51, 21.51, 21.52, 21.52]);
      expect(o.bad).toBe(3);
      expect(d.stats).toMatchObject({ samples: 8, badRecords: 3 });
      expect(Math.max(...sizes)).toBeLessThanOrEqual(chunkBytes);
      const total = progress[progress.length - 1][1];
      expect(progress[progress.length - 1][0]).toBe(total);
      expect(sizes.reduce((s, x) => s + x, 0)).toBe(total);
    }
  });

  it('replays a frames recording exactly as the live decoder reads it', async () => {
    const n = 20000;
    const bytes = encodeFrames(60000, new Float64Array(n).map((_, i) => 2 ** 32 - 5e6 + i * 500), [new Int32Array(n).map((_, i) => i * 7 - 5000)]);
    const path = join(dir, 'frames.bin');
    writeFileSync(path, bytes);
    const live = new FramesDecoder({ channels: [{ role: 'counts', scale: 1 }] });
    const expected = flatten([live.push(bytes, 0), live.flush(0)]);
    const rs: DecodeResult[] = [];
    await replayFile(path, new FramesDecoder({ channels: [{ role: 'counts', scale: 1 }] }), (r) => rs.push(r), { chunkBytes: 4093 });
    const got = flatten(rs);
    expect(got).toEqual(expected);
    expect(got.t.length).toBe(n);
  });

  it('uses the decoder a station file names', async () => {
    const station = parseStation({ station: 's', fibre: { name: 'f' }, input: { format: 'frames', channels: [{ role: 'angle_rad', scale: 1e-9 }] } });
    const d = makeDecoder(station);
    expect(d).toBeInstanceOf(FramesDecoder);
    const path = join(dir, 'one.bin');
    writeFileSync(path, encodeFrames(0, Float64Array.of(0, 1000), [Int32Array.of(5, -7)]));
    const rs: DecodeResult[] = [];
    await replayFile(path, d, (r) => rs.push(r));
    expect(flatten(rs).ch.angle_rad).toEqual([5 * 1e-9, -7 * 1e-9]); // raw i32 × scale
    const lines = makeDecoder(parseStation({ station: 's', fibre: { name: 'f' }, input: { columns: ['t_s', 'angle_rad'], separator: ';' } }));
    expect(lines).toBeInstanceOf(LinesDecoder);
  });

  it('rejects a missing file with its path', async () => {
    await expect(replayFile(join(dir, 'nope.csv'), new LinesDecoder(), () => {})).rejects.toThrow(/nope\.csv/);
  });
});
