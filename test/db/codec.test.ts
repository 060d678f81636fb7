import { describe, expect, it } from 'vitest';
import { rng } from '../helpers/blocks.js';
import {
  decodeChunk, decodeTimes, decodeValues, encodeChunk, encodeTimes, encodeValues,
  DEFLATED_FLAGS, DEFLATED_VALUE, shuffleBytes, unshuffleBytes,
} from '../../db/codec.js';


/** A Buffer whose byteOffset is odd, as SQLite may hand back: decoding must honour byteOffset. */
function misaligned(b: Buffer): Buffer {
  const big = Buffer.alloc(b.length + 3);
  b.copy(big, 1);
  return big.subarray(1, 1 + b.length);
}

describe('times', () => {
  it('uniform times need no blob and decode to t0 + i·dt', () => {
    const t = Float64Array.from({ length: 4096 }, (_, i) => 12.5 + i * 0.05);
    const e = encodeTimes(t);
    expect(e.kind).toBe('uniform');
    expect(e.blob).toBeNull();
    const d = decodeTimes(e.kind, e.t0, e.dt, null, t.length);
    for (let i = 0; i < t.length; i++) expect(Math.abs(d[i] - t[i])).toBeLessThanOrEqual(1e-9 * Math.max(1, t[i]) + 1e-9);
  });

  it('a single 2 ns deviation breaks uniformity and is kept to 1 ns', () => {
    const t = Float64Array.from({ length: 1000 }, (_, i) => i * 0.01);
    t[500] += 2e-9 + 1e-9 * 5; // beyond 1e-9·|t| + 1 ns at t = 5 s
    const e = encodeTimes(t);
    expect(e.kind).toBe('ns-varint');
    const d = decodeTimes(e.kind, e.t0, e.dt, e.blob, t.length);
    for (let i = 0; i < t.length; i++) expect(Math.abs(d[i] - t[i])).toBeLessThanOrEqual(1e-9);
  });

  it('jittered host-clock times round-trip to 1 ns, also from a misaligned Buffer', () => {
    const r = rng(7);
    const t = new Float64Array(5000);
    let x = 86400 * 3; // three days into a run
    for (let i = 0; i < t.length; i++) {
      x += 0.05 + (r() - 0.5) * 2e-3 + (i === 2000 ? 30 : 0); // one 30 s gap
      t[i] = x;
    }
    const e = encodeTimes(t);
    expect(e.kind).toBe('ns-varint');
    const d = decodeTimes(e.kind, e.t0, e.dt, misaligned(e.blob!), t.length);
    // 1 ns from rounding to integer ns, plus one ulp of |t| ≈ 2.6e5 s (5.8e-11 s)
    for (let i = 0; i < t.length; i++) expect(Math.abs(d[i] - t[i])).toBeLessThanOrEqual(1e-9);
  });

  it('refuses non-finite times', () => {
    expect(() => encodeTimes(Float64Array.of(0, NaN, 2))).toThrow(/t\[1\]/);
  });
});

describe('values', () => {
  it('integers (encoder counts, negative, wide range) are stored as ivarint, exactly', () => {
    const r = rng(11);
    const v = new Float64Array(4096);
    let c = -5_000_000;
    for (let i = 0; i < v.length; i++) {
      c += Math.round((r() - 0.5) * 200);
      v[i] = c;
    }
    v[100] = 2 ** 51;
    v[101] = -(2 ** 51);
    v[102] = 0;
    const e = encodeValues(v);
    expect(e.kind).toBe('ivarint');
    expect(Array.from(decodeValues(e.kind, e.base, misaligned(e.blob), v.length))).toEqual(Array.from(v));
  });

  it('small steps cost about one byte per sample as ivarint', () => {
    const v = Float64Array.from({ length: 4096 }, (_, i) => 1000 + (i % 50));
    const e = encodeValues(v);
    expect(e.kind).toBe('ivarint');
    expect(e.blob.length).toBeLessThanOrEqual(4096);
  });

  it('f32off keeps float32 precision of the spread, not of the absolute value', () => {
    const r = rng(3);
    // a 1e-3 rad swing on a 1.2 rad offset: float32 of the raw value would lose 1e-7 rad
    const v = Float64Array.from({ length: 4096 }, (_, i) => 1.2 + 1e-3 * Math.sin(i / 30) + 1e-7 * (r() - 0.5));
    const e = encodeValues(v);
    expect(e.kind).toBe('f32off');
    const d = decodeValues(e.kind, e.base, misaligned(e.blob), v.length);
    let min = Infinity;
    let max = -Infinity;
    for (const x of v) { min = Math.min(min, x); max = Math.max(max, x); }
    // IEEE 754 binary32 has a 24-bit significand: relative rounding error ≤ 2^-24
    const bound = 2 ** -24 * ((max - min) / 2) + 4 * Number.EPSILON * Math.abs(max);
    for (let i = 0; i < v.length; i++) expect(Math.abs(d[i] - v[i])).toBeLessThanOrEqual(bound);
    // and far better than float32 of the absolute value (2^-24·1.2 ≈ 7e-8)
    expect(bound).toBeLessThan(1e-10);
  });

  it('random data at many scales stays within the float32 bound; NaN survives', () => {
    const r = rng(99);
    for (let trial = 0; trial < 50; trial++) {
      const scale = 10 ** Math.floor(r() * 40 - 20);
      const offset = (r() - 0.5) * scale * 10 ** Math.floor(r() * 6);
      const n = 1 + Math.floor(r() * 3000);
      const v = Float64Array.from({ length: n }, () => offset + (r() - 0.5) * scale);
      if (n > 10) v[5] = NaN;
      const e = encodeValues(v);
      const d = decodeValues(e.kind, e.base, e.blob, n);
      let min = Infinity;
      let max = -Infinity;
      for (const x of v) if (!Number.isNaN(x)) { min = Math.min(min, x); max = Math.max(max, x); }
      const bound = 2 ** -24 * ((max - min) / 2) + 4 * Number.EPSILON * Math.max(Math.abs(max), Math.abs(min));
      let worst = 0;
      for (let i = 0; i < n; i++) {
        if (Number.isNaN(v[i])) expect(Number.isNaN(d[i])).toBe(true);
        else worst = Math.max(worst, Math.abs(d[i] - v[i]));
      }
      expect(worst, `trial ${trial}`).toBeLessThanOrEqual(bound);
    }
  });

  it('a spread beyond float32 falls back to exact f64; infinities are kept', () => {
    const v = Float64Array.of(-1e300, 1e300, 0.5, Infinity, -Infinity);
    const e = encodeValues(v);
    expect(e.kind).toBe('f64');
    expect(Array.from(decodeValues(e.kind, e.base, misaligned(e.blob), v.length))).toEqual(Array.from(v));
  });

  it('-0 is not an integer for ivarint (stays bit-exact through f32off)', () => {
    const e = encodeValues(Float64Array.of(-0, -0));
    expect(e.kind).toBe('f32off');
  });
});

describe('chunks', () => {
  it('flags are stored only when some flag is set, and deflate when it pays', () => {
    const t = Float64Array.from({ length: 4096 }, (_, i) => i * 0.05);
    const v = Float64Array.from({ length: 4096 }, (_, i) => Math.sin(i / 10));
    const none = encodeChunk(t, v, new Uint8Array(4096));
    expect(none.flags_blob).toBeNull();
    const f = new Uint8Array(4096);
    f[17] = 1;
    f[4000] = 6;
    const some = encodeChunk(t, v, f);
    expect(some.flags_blob).not.toBeNull();
    expect(some.deflated & DEFLATED_FLAGS).toBeTruthy();
    expect(some.flags_blob!.length).toBeLessThan(100);
    const d = decodeChunk({ ...some, flags_blob: misaligned(some.flags_blob!), value_blob: misaligned(some.value_blob) });
    expect(Array.from(d.flags)).toEqual(Array.from(f));
    expect(d.t[4095]).toBeCloseTo(4095 * 0.05, 12);
  });

  it('a constant-ish integer channel deflates its value blob and round-trips exactly', () => {
    const t = Float64Array.from({ length: 4096 }, (_, i) => i * 0.001);
    const v = Float64Array.from({ length: 4096 }, (_, i) => 100 + (i % 2));
    const c = encodeChunk(t, v, null);
    expect(c.value_kind).toBe('ivarint');
    expect(c.deflated & DEFLATED_VALUE).toBeTruthy();
    expect(Array.from(decodeChunk(c).v)).toEqual(Array.from(v));
  });

  it('float blobs are deflated only on request, byte-shuffled first, and decode to the same values', () => {
    const r = rng(21);
    const t = Float64Array.from({ length: 4096 }, (_, i) => i * 0.05);
    const v = Float64Array.from({ length: 4096 }, (_, i) => 0.012 + 1e-3 * Math.cos(i * 0.0338) + 1e-7 * (r() - 0.5));
    const plain = encodeChunk(t, v, null);
    expect(plain.value_kind).toBe('f32off');
    expect(plain.deflated & DEFLATED_VALUE).toBe(0);
    expect(plain.value_blob.length).toBe(4 * 4096);
    const packed = encodeChunk(t, v, null, 0, 4096, { deflateFloats: true });
    expect(packed.deflated & DEFLATED_VALUE).toBeTruthy();
    expect(packed.value_blob.length).toBeLessThan(0.75 * 4 * 4096);
    const a = decodeChunk(plain).v;
    const b = decodeChunk({ ...packed, value_blob: misaligned(packed.value_blob) }).v;
    expect(Buffer.from(a.buffer).equals(Buffer.from(b.buffer))).toBe(true);
    // f64 fallback goes through the same shuffle path
    const wide = Float64Array.from({ length: 512 }, (_, i) => (i % 2 ? 1e300 : -1e300) * (1 + i * 1e-3));
    const wz = encodeChunk(t, wide, null, 0, 512, { deflateFloats: true });
    expect(wz.value_kind).toBe('f64');
    expect(Array.from(decodeChunk(wz).v)).toEqual(Array.from(wide));
  });

  it('shuffleBytes and unshuffleBytes are inverses', () => {
    const src = Uint8Array.from({ length: 64 }, (_, i) => i);
    const s4 = shuffleBytes(src, 4);
    expect(Array.from(s4.subarray(0, 4))).toEqual([0, 4, 8, 12]);
    expect(Array.from(unshuffleBytes(s4, 4))).toEqual(Array.from(src));
    expect(Array.from(unshuffleBytes(shuffleBytes(src, 8), 8))).toEqual(Array.from(src));
  });

  it('encodes a sub-range of larger arrays', () => {
    const t = Float64Array.from({ length: 100 }, (_, i) => i);
    const v = Float64Array.from({ length: 100 }, (_, i) => i * i);
    const c = encodeChunk(t, v, null, 40, 10);
    expect(c.count).toBe(10);
    expect(c.t0_s).toBe(40);
    expect(c.t1_s).toBe(49);
    const d = decodeChunk(c);
    expect(Array.from(d.v)).toEqual(Array.from(v.subarray(40, 50)));
  });

  it('refuses a truncated blob with a message', () => {
    const v = Float64Array.of(1, 2000, 3, 400000);
    const e = encodeValues(v);
    expect(() => decodeValues(e.kind, e.base, e.blob.subarray(0, e.blob.length - 1), 4)).toThrow(/corrupt value blob/);
  });
});
