/**
 * Property tests (fast-check) of the two wire decoders, the clock unwrapper and
 * the clock guard (bad device times),
 * run in a child process by decoder-properties.test.ts so that a case that
 * hangs can be stopped: before each case this writes `case N` on stdout, and
 * the test kills the process when a case takes too long.
 *
 *   node --import tsx test/drivers/decoder-properties.ts <property> <seed> <runs>
 *
 * Exit 0 when the property held for every case; 1 with fast-check's report
 * (the counterexample, the seed and the path to replay it) on stderr.
 */
import { writeSync } from 'node:fs';
import { pathToFileURL } from 'node:url';
import fc from 'fast-check';
import type { DecodeResult, Decoder } from '../../drivers/decoder.js';
import { FramesDecoder } from '../../drivers/frames-decoder.js';
import { LinesDecoder } from '../../drivers/lines-decoder.js';
import { Unwrapper } from '../../drivers/unwrap.js';
import { encodeFrames } from '../../drivers/wire-encode.js';
import type { Incident } from '../../src/domain/events.js';
import { from } from 'rxjs';
import { ClockGuard, type GuardResult } from '../../drivers/clock-guard.js';
import { FLAG_INVALID, type AngleBlock } from '../../src/domain/block.js';
import { clean } from '../../pipelines/clean.js';
import { gapEvents } from '../../pipelines/gap-events.js';

let caseNo = 0;
/** Mark the start of a case for the watchdog. */
function started(): void {
  writeSync(1, `case ${++caseNo}\n`);
}

class Violation extends Error {}
function check(ok: boolean, what: string): void {
  if (!ok) throw new Violation(what);
}

interface Decoded {
  t: number[];
  ch: Record<string, number[]>;
  incidents: Incident[];
  blockSamples: number;
}

/** Push the chunks (with optional resyncs before some), flush, and collect everything, checking each block's shape. */
function decodeAll(d: Decoder, chunks: Uint8Array[], resyncBefore: ReadonlySet<number> = new Set()): Decoded {
  const out: Decoded = { t: [], ch: {}, incidents: [], blockSamples: 0 };
  const take = (r: DecodeResult) => {
    out.incidents.push(...r.incidents);
    for (const b of r.blocks) {
      check(Number.isInteger(b.n) && b.n >= 1 && b.t.length === b.n, `block of n = ${b.n} with ${b.t.length} times`);
      for (const [k, a] of Object.entries(b.channels)) {
        check(a!.length === b.n, `channel ${k}: ${a!.length} values in a block of ${b.n}`);
        (out.ch[k] ??= []).push(...a!);
      }
      out.t.push(...b.t);
      out.blockSamples += b.n;
    }
  };
  chunks.forEach((c, i) => {
    if (resyncBefore.has(i)) d.resync();
    take(d.push(c, 1000 * i));
  });
  take(d.flush(1000 * chunks.length));
  return out;
}

/** Cut `bytes` at the given fractions (any order, repeats allowed): the pieces a serial port may deliver. */
function split(bytes: Uint8Array, cuts: number[]): Uint8Array[] {
  const at = [...new Set(cuts.map((f) => Math.floor(f * bytes.length)))].sort((a, b) => a - b);
  const parts: Uint8Array[] = [];
  let p = 0;
  for (const c of at) {
    if (c <= p) continue;
    parts.push(bytes.subarray(p, c));
    p = c;
  }
  parts.push(bytes.subarray(p));
  return parts;
}

const cuts = fc.array(fc.double({ min: 0, max: 1, noNaN: true }), { maxLength: 12 });

/** What holds for any input: counts agree with what was handed on, and no gap or clock step is negative or NaN. */
function sane(d: Decoder, o: Decoded): void {
  check(d.stats.samples === o.blockSamples, `stats.samples ${d.stats.samples}, blocks held ${o.blockSamples}`);
  check(d.stats.badRecords >= 0 && d.stats.gaps >= 0 && d.stats.lostFrames >= 0, `negative counter in ${JSON.stringify(d.stats)}`);
  for (const e of o.incidents) {
    if (e.kind === 'gap') check(typeof e.value === 'number' && e.value >= 0 && Number.isFinite(e.value), `gap of ${e.value} s`);
    if (e.kind === 'clock-note') check(typeof e.value === 'number' && e.value > 0, `clock step of ${e.value} s`);
    if (e.kind === 'bad-input') check(typeof e.value === 'number' && e.value >= 1, `bad-input count ${e.value}`);
  }
}

const enc = new TextEncoder();

/** One record of a generated `lines` stream. */
type LineRec =
  | { kind: 'good'; dt: number; v: number; crlf: boolean }
  | { kind: 'bad'; text: string; crlf: boolean }
  | { kind: 'comment'; text: string }
  | { kind: 'empty' };

// printable junk that is certainly not a number ('z' is no digit, sign, point or exponent) and no comment
const junk = fc.string({ maxLength: 40 }).map((s) => `z${s.replace(/[\r\n]/g, ' ')}`);
const badLine = fc.oneof(junk, fc.constantFrom('1,2,3', '1,', ',1', '1;2', 'nan,1', '1,inf', '0x10,1', '1,,2', ' , ', '1e,2', '--1,2'), fc.constant('9'.repeat(5000)));
const lineRec: fc.Arbitrary<LineRec> = fc.oneof(
  { weight: 6, arbitrary: fc.record({ kind: fc.constant('good' as const), dt: fc.double({ min: 1e-6, max: 1e4, noNaN: true }), v: fc.double({ noNaN: true, noDefaultInfinity: true }), crlf: fc.boolean() }) },
  { weight: 2, arbitrary: fc.record({ kind: fc.constant('bad' as const), text: badLine, crlf: fc.boolean() }) },
  { weight: 1, arbitrary: fc.record({ kind: fc.constant('comment' as const), text: fc.string({ maxLength: 30 }).map((s) => `#note ${s.replace(/[\r\n]/g, ' ')}`) }) },
  { weight: 1, arbitrary: fc.constant({ kind: 'empty' as const }) },
);

/** Unsigned 32-bit microsecond clock of the frames header. */
const U32 = 2 ** 32;

/**
 * Good frames (clock wrapping at 2^32 µs, sequence wrapping at 2^16) with
 * `junk` between some of them and runs of frames missing, cut anywhere: every
 * frame sent is decoded exactly, the missing ones are counted exactly as lost.
 */
function goodFrames(junk: fc.Arbitrary<Uint8Array>) {
  return fc.property(
    fc.array(fc.record({ v: fc.integer({ min: -(2 ** 31), max: 2 ** 31 - 1 }), dropBefore: fc.oneof({ weight: 9, arbitrary: fc.constant(0) }, { weight: 1, arbitrary: fc.integer({ min: 1, max: 50 }) }), junk: fc.oneof({ weight: 4, arbitrary: fc.constant(new Uint8Array(0)) }, { weight: 1, arbitrary: junk }) }), { minLength: 1, maxLength: 300 }),
    fc.integer({ min: 0, max: 65535 }), fc.integer({ min: 0, max: U32 - 1 }), fc.integer({ min: 1, max: 100_000 }), cuts,
    (frames, seq0, us0, dtUs, cs) => {
        started();
        const parts: Uint8Array[] = [];
        let seq = seq0;
        let us = us0;
        let dropped = 0;
        let runs = 0;
        const want: { v: number; us: number }[] = [];
        frames.forEach((f, i) => {
          // a drop before the first frame is no loss the decoder could see
          if (i > 0 && f.dropBefore > 0) {
            seq += f.dropBefore;
            us += f.dropBefore * dtUs;
            dropped += f.dropBefore;
            runs++;
          }
          if (i > 0) parts.push(f.junk);
          parts.push(encodeFrames(seq, Float64Array.of(us), [Int32Array.of(f.v)]));
          want.push({ v: f.v, us });
          seq++;
          us += dtUs;
        });
        const bytes = new Uint8Array(parts.reduce((s, p) => s + p.length, 0));
        let p = 0;
        for (const x of parts) {
          bytes.set(x, p);
          p += x.length;
        }
        const d = new FramesDecoder({ channels: [{ role: 'angle_rad', scale: 1 }] });
        const o = decodeAll(d, split(bytes, cs));
        sane(d, o);
        check(d.stats.samples === want.length, `${d.stats.samples} frames decoded, ${want.length} sent`);
        check(d.stats.lostFrames === dropped, `${d.stats.lostFrames} frames counted lost, ${dropped} dropped`);
        check(d.stats.gaps === runs, `${d.stats.gaps} gaps counted, ${runs} runs dropped`);
        want.forEach((w, i) => {
          check(o.ch.angle_rad[i] === w.v, `frame ${i}: value ${o.ch.angle_rad[i]}, sent ${w.v}`);
          // the header clock wraps at 2^32 µs; the decoder unwraps it from the first frame's reading
          const exp = (w.us - (us0 - (us0 % U32))) * 1e-6;
          check(Math.abs(o.t[i] - exp) <= 1e-9 * Math.max(1, exp), `frame ${i}: time ${o.t[i]} s, sent ${exp} s`);
        });
      });
}

/** The properties, by name. */
export const PROPERTIES: Record<string, () => fc.IPropertyWithHooks<unknown[]> | fc.IProperty<unknown[]>> = {
  /** Any bytes, cut anywhere, with resyncs: no throw, counts consistent. */
  'lines: any bytes': () =>
    fc.property(fc.uint8Array({ maxLength: 6000 }), cuts, fc.array(fc.nat(12), { maxLength: 3 }), fc.boolean(), (bytes, cs, rs, declared) => {
      started();
      const d = new LinesDecoder(declared ? { columns: ['t_s', 'angle_rad'] } : {});
      sane(d, decodeAll(d, split(bytes, cs), new Set(rs)));
    }),

  /** Good lines among bad ones, comments and blank lines, cut anywhere: every good line decoded exactly, every bad one counted. */
  'lines: good records intact': () =>
    fc.property(fc.array(lineRec, { maxLength: 300 }), cuts, fc.boolean(), fc.double({ min: -1e6, max: 1e6, noNaN: true }), (recs, cs, finalLf, t0) => {
      started();
      let t = t0;
      const want: { t: number; v: number }[] = [];
      const text: string[] = [];
      let bad = 0;
      for (const r of recs) {
        if (r.kind === 'good') {
          t += r.dt;
          // the shortest decimal that reads back to exactly this double (ECMAScript Number::toString)
          const ts = String(t);
          want.push({ t: Number(ts), v: r.v });
          text.push(`${ts},${String(r.v)}${r.crlf ? '\r' : ''}`);
        } else if (r.kind === 'bad') {
          bad++;
          text.push(`${r.text}${r.crlf ? '\r' : ''}`);
        } else if (r.kind === 'comment') text.push(r.text);
        else text.push('');
      }
      const body = text.join('\n') + (finalLf ? '\n' : '');
      const d = new LinesDecoder({ columns: ['t_s', 'angle_rad'] });
      const o = decodeAll(d, split(enc.encode(body), cs));
      sane(d, o);
      check(d.stats.samples === want.length, `${d.stats.samples} samples decoded, ${want.length} good lines written`);
      check(d.stats.badRecords === bad, `${d.stats.badRecords} bad records counted, ${bad} bad lines written`);
      want.forEach((w, i) => {
        check(o.t[i] === w.t, `line ${i}: time ${o.t[i]}, written ${w.t}`);
        check(o.ch.angle_rad[i] === w.v, `line ${i}: value ${o.ch.angle_rad[i]}, written ${w.v}`);
      });
    }),

  /** A device clock that wraps (input.clock_wrap): any forward series with steps under half the wrap comes back continuous. */
  'lines: wrapped clock unwrapped': () =>
    fc.property(
      fc.integer({ min: 2, max: 1e9 }), fc.array(fc.double({ min: 0, max: 0.499, noNaN: true }), { minLength: 1, maxLength: 300 }), fc.double({ min: 0, max: 1e6, noNaN: true }), cuts,
      (wrapMs, fracs, start, cs) => {
        started();
        // integer milliseconds, as a device counter gives them: exact in the text, exact arithmetic in the check
        const truth: number[] = [];
        let x = Math.floor(start);
        for (const f of fracs) {
          x += Math.floor(f * wrapMs);
          truth.push(x);
        }
        const body = truth.map((ms, i) => `${ms % wrapMs},${i}\n`).join('');
        const d = new LinesDecoder({ columns: ['t_ms', 'angle_rad'], clockWrap: wrapMs / 1000 });
        const o = decodeAll(d, split(enc.encode(body), cs));
        sane(d, o);
        check(o.t.length === truth.length, `${o.t.length} of ${truth.length} lines`);
        const off = truth[0] - (truth[0] % wrapMs); // the first reading is taken as is
        truth.forEach((ms, i) => {
          const got = o.t[i];
          const exp = (ms - off) / 1000;
          check(Math.abs(got - exp) <= 1e-9 * Math.max(1, Math.abs(exp)), `line ${i}: ${got} s, truth ${exp} s`);
          if (i > 0) check(got >= o.t[i - 1], `line ${i}: time went back from ${o.t[i - 1]} to ${got}`);
        });
      }),

  /** Any bytes as frames, cut anywhere: no throw, counts consistent, times strictly increasing. */
  'frames: any bytes': () =>
    fc.property(fc.uint8Array({ maxLength: 6000 }), cuts, fc.array(fc.nat(12), { maxLength: 3 }), fc.integer({ min: 1, max: 16 }), (bytes, cs, rs, nch) => {
      started();
      const d = new FramesDecoder({ channels: Array.from({ length: nch }, (_, k) => ({ role: k === 0 ? 'angle_rad' : '_', scale: 1e-9 })) });
      const o = decodeAll(d, split(bytes, cs), new Set(rs));
      sane(d, o);
      for (let i = 1; i < o.t.length; i++) check(o.t[i] > o.t[i - 1], `sample ${i}: time ${o.t[i]} not after ${o.t[i - 1]}`);
    }),

  /** Good frames with random junk between some and runs missing (goodFrames). */
  'frames: good records intact': () => goodFrames(fc.uint8Array({ minLength: 1, maxLength: 40 })),

  /**
   * The same with junk that looks like the start of a frame (sync, version, a
   * channel count, then too few bytes): the frames after it must still count.
   */
  'frames: good records after a false frame start': () =>
    goodFrames(fc.tuple(fc.integer({ min: 1, max: 16 }), fc.uint8Array({ maxLength: 8 })).map(([n, rest]) => Uint8Array.of(0xa7, 0x3c, 0x01, n, ...rest))),

  /** The Unwrapper on any forward or backward series with steps under half the modulus: the truth, less the first reading's whole wraps. */
  'unwrap: steps under half the modulus': () =>
    fc.property(
      fc.integer({ min: 2, max: 2 ** 40 }), fc.integer({ min: -(2 ** 45), max: 2 ** 45 }), fc.array(fc.double({ min: -0.4999, max: 0.4999, noNaN: true }), { maxLength: 500 }),
      (m, x0, steps) => {
        started();
        const u = new Unwrapper(m);
        const mod = (x: number) => ((x % m) + m) % m;
        let x = x0;
        const off = x0 - mod(x0);
        check(u.next(mod(x)) === x - off, 'first reading not taken as is');
        for (const s of steps) {
          x += Math.trunc(s * m);
          const got = u.next(mod(x));
          check(got === x - off, `reading ${mod(x)}: unwrapped ${got}, truth ${x - off}`);
        }
      }),

  /**
   * The Unwrapper on any finite series (jumps of any size either way, repeats):
   * no throw, a finite result that differs from the reading by whole wraps. Only
   * finite readings reach it: the lines decoder refuses a time that overflows
   * (1e400) as not a number, and frame clocks are u32.
   */
  'unwrap: any finite series': () =>
    fc.property(fc.double({ min: 1e-6, max: 1e12, noNaN: true }), fc.array(fc.double({ min: -1e15, max: 1e15, noNaN: true }), { maxLength: 500 }), (m, xs) => {
      started();
      const u = new Unwrapper(m);
      for (const x of xs) {
        const y = u.next(x);
        check(Number.isFinite(y), `reading ${x} gave ${y}`);
        const k = (y - x) / m;
        check(Math.abs(k - Math.round(k)) < 1e-3 * Math.max(1, Math.abs(k)), `reading ${x} → ${y}: not a whole number of wraps of ${m}`);
      }
    }),

  /**
   * The clock guard on any device times (NaN, ±Infinity, repeats, steps back, leaps of any size), cut
   * into blocks anywhere: no throw; every sample either handed on or counted as dropped; times
   * handed on finite and never going back; masked exactly the samples it counts; and after `clean`
   * no gap event of zero or negative length.
   */
  'clock: any time series': () =>
    fc.property(
      fc.array(fc.oneof(
        fc.double({ min: -1e6, max: 1e6, noNaN: true }),
        fc.constantFrom(NaN, Infinity, -Infinity, 1e308, 0),
        fc.integer({ min: 0, max: 200 }).map((k) => k * 0.02),
      ), { maxLength: 400 }),
      cuts,
      (ts, at) => {
        started();
        guardChecks(Float64Array.from(ts), at);
      }),

  /**
   * A regular 50 Hz clock with faults sprinkled in (absurd, repeated, back, NaN): the good samples far
   * from any fault keep their times exactly.
   */
  'clock: good times intact': () =>
    fc.property(
      fc.integer({ min: 20, max: 600 }),
      fc.array(fc.tuple(fc.double({ min: 0, max: 1, noNaN: true }), fc.constantFrom(1e308, NaN, -5, 0, 'repeat' as const)), { maxLength: 6 }),
      cuts,
      (n, faults, at) => {
        started();
        const t = Float64Array.from({ length: n }, (_, i) => i * 0.02);
        const bad = new Set<number>();
        for (const [f, v] of faults) {
          const i = 1 + Math.floor(f * (n - 2));
          t[i] = v === 'repeat' ? t[i - 1] : v;
          bad.add(i);
        }
        const out = guardChecks(t, at);
        // values are the input indices: a good sample with no fault within 4 places keeps its time
        for (let j = 0; j < out.y.length; j++) {
          const i = out.y[j];
          let near = false;
          for (const b of bad) if (Math.abs(b - i) <= 4) near = true;
          if (!near && !out.masked[j]) check(out.t[j] === i * 0.02, `sample ${i}: time ${out.t[j]}, was ${i * 0.02}`);
        }
      }),
};

/** Run the guard (then clean and gap events) over `t` cut at `at`; check what holds for any input. */
function guardChecks(t: Float64Array, at: number[]): { t: number[]; y: number[]; masked: boolean[] } {
  const n = t.length;
  const y = Float64Array.from({ length: n }, (_, i) => i);
  const g = new ClockGuard();
  const out = { t: [] as number[], y: [] as number[], masked: [] as boolean[] };
  const blocks: AngleBlock[] = [];
  let masked = 0;
  const take = (r: GuardResult) => {
    for (const { block, faults } of r.blocks) {
      check(block.n === block.t.length && block.n === block.angle.length, `block of n = ${block.n}`);
      blocks.push(block);
      for (let i = 0; i < block.n; i++) {
        check(Number.isFinite(block.t[i]), `time ${block.t[i]} handed on`);
        check(out.t.length === 0 || block.t[i] >= out.t[out.t.length - 1], `time went back: ${out.t[out.t.length - 1]} → ${block.t[i]}`);
        const m = (block.flags[i] & FLAG_INVALID) !== 0;
        check(m === Boolean(faults?.[i]), 'a fault is masked, and only faults are');
        if (m) masked++;
        out.t.push(block.t[i]);
        out.y.push(block.angle[i]);
        out.masked.push(m);
      }
    }
  };
  const pieces = split(new Uint8Array(n), at);
  let p = 0;
  for (const piece of pieces) {
    const k = piece.length;
    if (k === 0) continue;
    take(g.push({ n: k, t: t.slice(p, p + k), angle: y.slice(p, p + k), flags: new Uint8Array(k), channels: {}, clock: 'device', host_ms: p }));
    p += k;
  }
  take(g.flush(n));
  check(out.t.length + g.stats.dropped === n, `${n} in, ${out.t.length} out and ${g.stats.dropped} dropped`);
  check(masked === g.stats.masked, `${masked} masked, ${g.stats.masked} counted`);
  const gaps: Incident[] = [];
  from(blocks).pipe(clean({ hampelHalfWidth: 3, hampelThreshold: 5 }), gapEvents((inc) => gaps.push(inc))).subscribe();
  for (const e of gaps) check(e.kind === 'gap' && (e.value as number) > 0, `gap of ${e.value} s`);
  return out;
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  const [name, seed, runs] = process.argv.slice(2);
  const make = PROPERTIES[name];
  if (!make) {
    process.stderr.write(`unknown property "${name}"; known: ${Object.keys(PROPERTIES).join(' | ')}\n`);
    process.exit(2);
  }
  try {
    fc.assert(make(), { seed: Number(seed), numRuns: Number(runs) });
    writeSync(1, `done ${caseNo}\n`);
  } catch (e) {
    process.stderr.write(`${(e as Error).message}\n`);
    process.exitCode = 1;
  }
}
