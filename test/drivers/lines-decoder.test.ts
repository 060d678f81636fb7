import { describe, expect, it } from 'vitest';
import type { RawBlock } from '../../src/domain/block.js';
import type { Incident } from '../../src/domain/events.js';
import type { DecodeResult, Decoder } from '../../drivers/decoder.js';
import { LinesDecoder, type LinesDecoderOptions } from '../../drivers/lines-decoder.js';
import { parseNumber } from '../../drivers/parse-number.js';

const enc = (s: string) => new TextEncoder().encode(s);

function lcg(seed: number): () => number {
  let s = seed >>> 0;
  return () => (s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 2 ** 32;
}

interface Collected {
  t: number[];
  clock: string[];
  ch: Record<string, number[]>;
  incidents: Incident[];
  blocks: RawBlock[];
}

function collect(results: DecodeResult[]): Collected {
  const c: Collected = { t: [], clock: [], ch: {}, incidents: [], blocks: [] };
  for (const r of results) {
    c.incidents.push(...r.incidents);
    for (const b of r.blocks) {
      c.blocks.push(b);
      expect(b.t.length).toBe(b.n);
      for (let i = 0; i < b.n; i++) {
        c.t.push(b.t[i]);
        c.clock.push(b.clock);
      }
      for (const [k, a] of Object.entries(b.channels)) {
        expect(a!.length).toBe(b.n);
        (c.ch[k] ??= []).push(...a!);
      }
    }
  }
  return c;
}

/** Feed the chunks, then flush, all at host time host_ms. */
function run(d: Decoder, chunks: Uint8Array[], host_ms = 0): Collected {
  const rs = chunks.map((ch) => d.push(ch, host_ms));
  rs.push(d.flush(host_ms));
  return collect(rs);
}

const opts: LinesDecoderOptions = { columns: ['t_s', 'angle_rad'], separator: ',' };

describe('parseNumber', () => {
  it('equals parseFloat on many random decimal forms', () => {
    const rnd = lcg(2024);
    const digit = () => String(Math.floor(rnd() * 10));
    for (let trial = 0; trial < 30000; trial++) {
      let s = '';
      const r = rnd();
      if (r < 0.2) s += '-';
      else if (r < 0.3) s += '+';
      const intDigits = Math.floor(rnd() * 12);
      const fracDigits = Math.floor(rnd() * 20);
      for (let i = 0; i < intDigits; i++) s += digit();
      if (fracDigits > 0 || intDigits === 0) {
        s += '.';
        for (let i = 0; i < Math.max(fracDigits, intDigits === 0 ? 1 : 0); i++) s += digit();
      }
      if (rnd() < 0.4) s += (rnd() < 0.5 ? 'e' : 'E') + (rnd() < 0.5 ? '-' : rnd() < 0.5 ? '+' : '') + Math.floor(rnd() * 40);
      const b = enc(s);
      expect(Object.is(parseNumber(b, 0, b.length), parseFloat(s)), s).toBe(true);
    }
  });

  it('equals parseFloat on the shortest text of random float64 values', () => {
    const rnd = lcg(99);
    const buf = new Float64Array(1);
    const bits = new Uint32Array(buf.buffer);
    for (let trial = 0; trial < 20000; trial++) {
      bits[0] = Math.floor(rnd() * 2 ** 32);
      bits[1] = Math.floor(rnd() * 2 ** 32);
      const v = trial % 2 ? buf[0] : (rnd() - 0.5) * 10 ** Math.floor(rnd() * 30 - 15);
      if (!Number.isFinite(v)) continue;
      for (const s of [String(v), v.toExponential(), v.toPrecision(9)]) {
        const b = enc(s);
        expect(Object.is(parseNumber(b, 0, b.length), parseFloat(s)), s).toBe(true);
      }
    }
  });

  it('rounds 16- to 19-digit texts next to the midpoint between two doubles as parseFloat does', () => {
    // the hardest inputs for the double-double path: the exact midpoint (2M+1)·2^(E−1)
    // between a double M·2^E and its neighbour, cut to 16…19 digits and nudged by ±1
    const rnd = lcg(31);
    const f = new Float64Array(1);
    const u = new Uint32Array(f.buffer);
    for (let i = 0; i < 3000; i++) {
      const e = Math.floor(rnd() * 130) - 70;
      u[0] = rnd() * 2 ** 32;
      u[1] = ((1023 + e) << 20) | Math.floor(rnd() * 2 ** 20);
      const ex = ((u[1] >>> 20) & 0x7ff) - 1075;
      const M = ((BigInt(u[1] & 0xfffff) | 0x100000n) << 32n) | BigInt(u[0]);
      const k = 1 - ex;
      const digits = k > 0 ? ((2n * M + 1n) * 5n ** BigInt(k)).toString() : ((2n * M + 1n) << BigInt(-k)).toString();
      const pow10 = k > 0 ? -k : 0;
      for (const nd of [16, 17, 18, 19]) {
        if (digits.length <= nd) continue;
        const head = BigInt(digits.slice(0, nd));
        for (const d of [-1n, 0n, 1n]) {
          const t = `${head + d}e${pow10 + digits.length - nd}`;
          const b = enc(t);
          expect(Object.is(parseNumber(b, 0, b.length), parseFloat(t)), t).toBe(true);
        }
      }
    }
  });

  it('accepts .5, 5., leading + and surrounding blanks; rejects the rest', () => {
    const p = (s: string) => parseNumber(enc(s), 0, enc(s).length);
    expect(p('.5')).toBe(0.5);
    expect(p('5.')).toBe(5);
    expect(p('+.5e1')).toBe(5);
    expect(p(' -0 ')).toBe(-0);
    expect(p('1e400')).toBeNaN(); // overflows: not a usable reading
    for (const bad of ['', ' ', 'nan', 'NaN', 'inf', 'Infinity', '-', '.', 'e5', '1e', '1e+', '1.2.3', '12a', '0x10', '1 2']) expect(p(bad), bad).toBeNaN();
  });
});

describe('LinesDecoder', () => {
  it('decodes t_s,angle_rad lines into blocks', () => {
    const d = new LinesDecoder(opts);
    const c = run(d, [enc('0.5,1e-3\n1.5,-2.5e-4\n2.5,.125\n')], 1234);
    expect(c.t).toEqual([0.5, 1.5, 2.5]);
    expect(c.ch.angle_rad).toEqual([1e-3, -2.5e-4, 0.125]);
    expect(c.blocks[0].clock).toBe('device');
    expect(c.blocks[0].host_ms).toBe(1234);
    expect(c.incidents).toEqual([]);
    expect(d.stats).toEqual({ samples: 3, badRecords: 0, gaps: 0, lostFrames: 0 });
  });

  it('handles CRLF, comments and empty lines', () => {
    const c = run(new LinesDecoder(opts), [enc('# a comment\r\n1,2\r\n\r\n# another, with 3,4\r\n3,4\r\n')]);
    expect(c.t).toEqual([1, 3]);
    expect(c.ch.angle_rad).toEqual([2, 4]);
    expect(c.incidents).toEqual([]);
  });

  it('skips garbage between good lines without losing or shifting good samples', () => {
    const garbage = new Uint8Array([0xff, 0x00, 0xa7, 0x3c, 0x01, 0x10, 0x80, 0x0a]); // binary junk ending in LF
    const parts = [enc('1,10\n'), garbage, enc('2,20\nhello world\n3,30\n4,40,99\n5\n6,60\n7,abc\n8,80\n')];
    const d = new LinesDecoder(opts);
    const c = run(d, parts);
    expect(c.t).toEqual([1, 2, 3, 6, 8]);
    expect(c.ch.angle_rad).toEqual([10, 20, 30, 60, 80]);
    expect(d.stats.badRecords).toBe(5);
    const counts = c.incidents.filter((i) => i.kind === 'bad-input').reduce((s, i) => s + (i.data!.count as number), 0);
    expect(counts).toBe(5);
  });

  it('counts NaN and other non-numbers as bad input', () => {
    const d = new LinesDecoder(opts);
    const c = run(d, [enc('1,1\n2,nan\n3,NaN\nnan,4\n5,inf\n6,-Infinity\n7,7\n')]);
    expect(c.t).toEqual([1, 7]);
    expect(d.stats.badRecords).toBe(5);
    expect(c.incidents[0].data).toMatchObject({ reason: 'field 2 (angle_rad) is not a number', snippet: '2,nan', record: 2 });
  });

  it('gives identical output however the input is split (every byte position, and byte by byte)', () => {
    const text = '# hello\r\n0.25,1\n0.5,-2e-3\r\nbad line\n# columns: t_ms,a,b\n1000,1,2\n1001,+3.5,.5\n2000,1\n\n3000,7,8';
    const bytes = enc(text);
    const whole = run(new LinesDecoder(opts), [bytes]);
    expect(whole.t).toEqual([0.25, 0.5, 1, 1.001, 3]);
    expect(whole.ch.a).toEqual([1, 3.5, 7]);
    for (let k = 0; k <= bytes.length; k++) {
      const split = run(new LinesDecoder(opts), [bytes.subarray(0, k), bytes.subarray(k)]);
      expect({ t: split.t, ch: split.ch, inc: split.incidents }, `split at ${k}`).toEqual({ t: whole.t, ch: whole.ch, inc: whole.incidents });
    }
    for (let k = 1; k < bytes.length; k++) {
      for (let j = k + 1; j < bytes.length; j += 7) {
        const split = run(new LinesDecoder(opts), [bytes.subarray(0, k), bytes.subarray(k, j), bytes.subarray(j)]);
        expect(split.t, `split at ${k},${j}`).toEqual(whole.t);
      }
    }
    const bytewise = run(new LinesDecoder(opts), Array.from(bytes, (_, i) => bytes.subarray(i, i + 1)));
    expect({ t: bytewise.t, ch: bytewise.ch, inc: bytewise.incidents }).toEqual({ t: whole.t, ch: whole.ch, inc: whole.incidents });
  });

  it('rejects an over-long line the same way however it is split', () => {
    const o = { ...opts, maxLineBytes: 20 };
    const bytes = enc('1,1\n' + '12345678,'.repeat(4) + '\r\n2,2\n' + '9'.repeat(21) + '\n3,3\n' + '8'.repeat(20) + '\n');
    const whole = run(new LinesDecoder(o), [bytes]);
    expect(whole.t).toEqual([1, 2, 3]);
    expect(whole.incidents.length).toBe(2); // first at once, the rest held to the end
    expect(whole.incidents[1].data!.count).toBe(2);
    for (let k = 0; k <= bytes.length; k++) {
      const split = run(new LinesDecoder(o), [bytes.subarray(0, k), bytes.subarray(k)]);
      expect({ t: split.t, inc: split.incidents }, `split at ${k}`).toEqual({ t: whole.t, inc: whole.incidents });
    }
  });

  it('lets "# columns:" override the columns for the following lines', () => {
    const d = new LinesDecoder(opts);
    const c = run(d, [enc('1,0.5\n# columns: t_us;_;x_m;temp_C\n2000000,junk,0.001,21.5\n# columns: bogus,a\n3000000,x,0.002,22\n')]);
    expect(c.t).toEqual([1, 2, 3]);
    expect(c.blocks.map((b) => Object.keys(b.channels))).toEqual([['angle_rad'], ['x_m', 'temp_C']]);
    expect(c.ch.x_m).toEqual([0.001, 0.002]);
    expect(d.stats.badRecords).toBe(1); // the bogus declaration; the old columns stay
    expect(d.columns).toEqual(['t_us', '_', 'x_m', 'temp_C']);
  });

  it('reads every separator', () => {
    for (const [sep, line] of [[';', '1;2\n'], ['tab', '1\t2\n'], ['spaces', '  1    2  \n']] as const) {
      const c = run(new LinesDecoder({ columns: ['t_s', 'a'], separator: sep }), [enc(line + line.replace('1', '3'))]);
      expect(c.t, sep).toEqual([1, 3]);
      expect(c.ch.a, sep).toEqual([2, 2]);
    }
    // with commas, blanks around a field are tolerated
    expect(run(new LinesDecoder(opts), [enc(' 1 , 2 \n')]).ch.angle_rad).toEqual([2]);
  });

  it('converts t_ms and t_us to seconds and unwraps a wrapping clock', () => {
    // a 16-bit millisecond counter wraps every 65.536 s
    const lines: string[] = [];
    const truth: number[] = [];
    for (let i = 0; i < 400; i++) {
      const ms = i * 997;
      truth.push(ms / 1000);
      lines.push(`${ms % 65536},${i}`);
    }
    const d = new LinesDecoder({ columns: ['t_ms', 'a'], separator: ',', clockWrap: 65.536 });
    const c = run(d, [enc(lines.join('\n') + '\n')]);
    expect(c.t.length).toBe(400);
    c.t.forEach((t, i) => expect(t).toBeCloseTo(truth[i], 9));
    for (let i = 1; i < c.t.length; i++) expect(c.t[i]).toBeGreaterThan(c.t[i - 1]);
  });

  it('stamps lines without a time column with the host monotonic clock', () => {
    let now = 100;
    const d = new LinesDecoder({ columns: ['a', 'b'], separator: ',', hostClock: () => now });
    now = 101;
    const r1 = d.push(enc('1,2\n3,4\n5,'), 0);
    now = 102;
    const r2 = d.push(enc('6\n7,8\n'), 0);
    const c = collect([r1, r2, d.flush(0)]);
    expect(c.clock).toEqual(['host', 'host', 'host', 'host']);
    expect(c.t).toEqual([100.5, 101, 101.5, 102]);
    expect(c.ch.a).toEqual([1, 3, 5, 7]);
  });

  it('rate-limits bad-input incidents to one per second carrying the count', () => {
    const d = new LinesDecoder(opts);
    const out: Incident[] = [];
    out.push(...d.push(enc('x\ny\n1,1\n'), 0).incidents); // first bad line: reported at once
    out.push(...d.push(enc('z\n'), 500).incidents); // within the second: held
    out.push(...d.push(enc('w\nv\n'), 1500).incidents); // due: y and z; w and v start the next count
    out.push(...d.push(enc('u\n'), 1600).incidents); // held
    out.push(...d.flush(1700).incidents); // the end reports what is held
    expect(out.map((i) => i.data!.count)).toEqual([1, 2, 3]);
    expect(out.map((i) => i.data!.snippet)).toEqual(['x', 'y', 'w']);
    expect(out.map((i) => i.host_ms)).toEqual([0, 1500, 1700]);
    expect(out.every((i) => i.kind === 'bad-input' && i.severity === 'warning')).toBe(true);
    expect(d.stats.badRecords).toBe(6);
  });

  it('caps a line that never ends and recovers at the next line end', () => {
    const d = new LinesDecoder({ ...opts, maxLineBytes: 64 });
    const junk = new Uint8Array(1 << 16).fill(0x31); // '1' forever
    const rs: DecodeResult[] = [d.push(enc('1,1\n'), 0)];
    for (let i = 0; i < 64; i++) rs.push(d.push(junk, 0)); // 4 MiB without a line end
    // memory: the carried tail never exceeds the cap
    expect((d as unknown as { tail: Uint8Array }).tail.length).toBeLessThanOrEqual(66);
    rs.push(d.push(enc('\n2,2\n'), 0), d.flush(0));
    const c = collect(rs);
    expect(c.t).toEqual([1, 2]);
    expect(d.stats.badRecords).toBe(1);
    expect(c.incidents[0].data!.reason).toBe('line longer than 64 bytes');
    // the same line complete in one chunk is rejected the same way
    const d2 = new LinesDecoder({ ...opts, maxLineBytes: 64 });
    const c2 = run(d2, [enc('1,1\n' + '1'.repeat(100) + '\n2,2\n')]);
    expect(c2.t).toEqual([1, 2]);
    expect(c2.incidents[0].data!.reason).toBe('line longer than 64 bytes');
  });

  it('drops a torn first line when told the stream starts mid-record', () => {
    const d = new LinesDecoder({ ...opts, midStream: true });
    const c = run(d, [enc('.25,3\n1,1\n2,2\n')]);
    expect(c.t).toEqual([1, 2]);
    // expected on every start, so counted but not reported as bad input
    expect(c.incidents.length).toBe(0);
    expect(d.stats.badRecords).toBe(1);
  });

  it('keeps a comment as the first line of a mid-stream start', () => {
    const d = new LinesDecoder({ midStream: true, separator: ',' });
    const c = run(d, [enc('# columns: t_s,angle_rad\n1,1\n2,2\n')]);
    expect(c.t).toEqual([1, 2]);
    expect(d.stats.badRecords).toBe(0);
  });

  it('caps blocks at blockCap samples', () => {
    const lines = Array.from({ length: 25 }, (_, i) => `${i},${i * 2}`).join('\n') + '\n';
    const c = run(new LinesDecoder({ ...opts, blockCap: 10 }), [enc(lines)]);
    expect(c.blocks.map((b) => b.n)).toEqual([10, 10, 5]);
    expect(c.ch.angle_rad).toEqual(Array.from({ length: 25 }, (_, i) => i * 2));
  });

  it('reads random numbers in every form exactly as parseFloat does', () => {
    const rnd = lcg(5);
    const texts: string[] = [];
    for (let i = 0; i < 5000; i++) {
      const v = (rnd() - 0.5) * 10 ** Math.floor(rnd() * 40 - 20);
      const forms = [String(v), v.toExponential(3), v.toFixed(6), v.toPrecision(12), '+' + Math.abs(v), '.5' + String(i)];
      texts.push(forms[i % forms.length]);
    }
    const body = texts.map((s, i) => `${i};${s}`).join('\n') + '\n';
    const c = run(new LinesDecoder({ columns: ['t_s', 'a'], separator: ';' }), [enc(body)]);
    expect(c.ch.a.length).toBe(texts.length);
    c.ch.a.forEach((v, i) => expect(Object.is(v, parseFloat(texts[i])), texts[i]).toBe(true));
  });

  it('reports lines before any column declaration', () => {
    const d = new LinesDecoder({ separator: ',' });
    const c = run(d, [enc('1,2\n# columns: t_s,a\n3,4\n')]);
    expect(c.t).toEqual([3]);
    expect(c.incidents[0].data!.reason).toMatch(/no columns declared/);
  });

  it('rejects bad options, naming them', () => {
    expect(() => new LinesDecoder({ columns: ['t_s', 't_ms'], separator: ',' })).toThrow(/more than one time column/);
    expect(() => new LinesDecoder({ columns: ['a', 'a'], separator: ',' })).toThrow(/listed twice/);
    expect(() => new LinesDecoder({ separator: '|' as ',' })).toThrow(/separator/);
  });
});
