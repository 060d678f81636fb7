/**
 * Decoder of the `frames` wire format (docs/wire.md, "frames"): little-endian binary
 * records `A7 3C | version 1 | n | seq u16 | µs u32 | n × i32 | CRC-16`.
 * Works over DataView and typed arrays; no object per frame.
 */
import type { ColumnRole, RawBlock, ValueRole } from '../src/domain/block.js';
import { crc16CcittFalse } from './crc16.js';
import { BadInputLimiter } from './bad-input-limiter.js';
import type { DecodeResult, Decoder, DecoderStats } from './decoder.js';
import { Unwrapper } from './unwrap.js';

/** Options of FramesDecoder. */
export interface FramesDecoderOptions {
  /** the station's channels in frame order: role and the scale that turns the raw i32 into the role's unit */
  channels: { role: ColumnRole; scale: number }[];
  /** samples per block at most (default 4096) */
  blockCap?: number;
}

const SYNC0 = 0xa7;
const SYNC1 = 0x3c;
const VERSION = 1;
const HEADER = 10; // bytes before the channel values
const MAX_FRAME = HEADER + 4 * 16 + 2;

/** The `frames` decoder. */
export class FramesDecoder implements Decoder {
  readonly stats: DecoderStats = { samples: 0, badRecords: 0, gaps: 0, lostFrames: 0 };
  private readonly nch: number;
  private readonly frameLen: number;
  private readonly target: Int32Array; // channel index in the block per frame channel, −1 to skip
  private readonly scale: Float64Array;
  private readonly roles: ValueRole[];
  private readonly blockCap: number;
  private readonly limiter = new BadInputLimiter('frame');
  private readonly clock = new Unwrapper(2 ** 32);
  private tail = new Uint8Array(0);
  private inJunk = false; // inside a run of bytes already counted as bad
  private haveSeq = false;
  private lastSeq = 0;
  private lastT = NaN;
  private dtEst = NaN; // frame interval estimate, seconds
  private rebase = 0; // seconds added after the device clock went back (a device restart)
  private frameNo = 0;

  constructor(opts: FramesDecoderOptions) {
    const ch = opts?.channels;
    if (!Array.isArray(ch) || ch.length < 1 || ch.length > 16) throw new TypeError('FramesDecoder: channels must list 1 to 16 channels');
    this.nch = ch.length;
    this.frameLen = HEADER + 4 * this.nch + 2;
    this.blockCap = opts.blockCap ?? 4096;
    if (!(this.blockCap >= 1)) throw new TypeError(`FramesDecoder: blockCap must be ≥ 1, got ${opts.blockCap}`);
    this.target = new Int32Array(this.nch);
    this.scale = new Float64Array(this.nch);
    this.roles = [];
    ch.forEach((c, i) => {
      if (!Number.isFinite(c.scale)) throw new TypeError(`FramesDecoder: channels[${i}].scale must be finite`);
      this.scale[i] = c.scale;
      if (c.role === '_') this.target[i] = -1;
      else if (c.role === 't_s' || c.role === 't_ms' || c.role === 't_us') throw new TypeError(`FramesDecoder: channels[${i}].role: time comes from the frame header, not a channel`);
      else {
        if (this.roles.includes(c.role)) throw new TypeError(`FramesDecoder: channels[${i}].role "${c.role}" listed twice`);
        this.target[i] = this.roles.length;
        this.roles.push(c.role);
      }
    });
  }

  /** Drop the carried partial frame; decoding resynchronises on the next sync pair. */
  resync(): void {
    this.tail = new Uint8Array(0);
  }

  /** Decode the whole frames in the carried tail + chunk; a torn last frame is carried over. */
  push(chunk: Uint8Array, host_ms: number): DecodeResult {
    let buf = chunk;
    if (this.tail.length > 0) {
      buf = new Uint8Array(this.tail.length + chunk.length);
      buf.set(this.tail, 0);
      buf.set(chunk, this.tail.length);
    }
    const out: DecodeResult = { blocks: [], incidents: [] };
    this.limiter.due(out.incidents, host_ms);
    const used = this.scan(buf, host_ms, out);
    this.tail = buf.slice(used); // < one frame: the capped tail
    return out;
  }

  /**
   * End of input: what is left is a torn frame — or bytes that only looked
   * like a frame's start, with whole frames after them: the first byte is
   * counted bad and the rest scanned again, until nothing is left.
   */
  flush(host_ms: number): DecodeResult {
    const out: DecodeResult = { blocks: [], incidents: [] };
    let rest = this.tail;
    this.tail = new Uint8Array(0);
    while (rest.length > 0) {
      if (!this.inJunk) this.bad(out, host_ms, rest, 0, 'torn frame at end of input');
      this.inJunk = true;
      const after = rest.subarray(1);
      rest = after.subarray(this.scan(after, host_ms, out));
    }
    this.inJunk = false;
    this.limiter.due(out.incidents, host_ms, true);
    return out;
  }

  /** Decode whole frames from buf; returns the number of bytes consumed. */
  private scan(buf: Uint8Array, host_ms: number, out: DecodeResult): number {
    const len = buf.length;
    const dv = new DataView(buf.buffer, buf.byteOffset, buf.byteLength);
    const nch = this.nch;
    const fl = this.frameLen;
    const target = this.target;
    const scale = this.scale;
    const nroles = this.roles.length;
    let cap = 0;
    let n = 0;
    let t = new Float64Array(0);
    let chans: Float64Array[] = [];
    const finish = () => {
      if (n === 0) return;
      const channels: Partial<Record<ValueRole, Float64Array>> = {};
      for (let r = 0; r < nroles; r++) channels[this.roles[r]] = n === cap ? chans[r] : chans[r].subarray(0, n);
      const b: RawBlock = { n, t: n === cap ? t : t.subarray(0, n), clock: 'device', host_ms, channels };
      out.blocks.push(b);
      n = 0;
    };
    let i = 0;
    while (i < len) {
      if (buf[i] !== SYNC0) {
        this.junk(out, host_ms, buf, i);
        i++;
        continue;
      }
      if (i + 4 > len) break; // header not complete: wait for more bytes
      const cnt = buf[i + 3];
      if (buf[i + 1] !== SYNC1 || buf[i + 2] !== VERSION || cnt < 1 || cnt > 16) {
        this.junk(out, host_ms, buf, i);
        i++;
        continue;
      }
      const flen = HEADER + 4 * cnt + 2;
      if (i + flen > len) break; // torn frame: keep it in the tail
      const crcAt = i + HEADER + 4 * cnt;
      if (crc16CcittFalse(buf, i + 2, crcAt) !== dv.getUint16(crcAt, true)) {
        // drop it and resynchronise on the next sync pair, which may lie inside this frame
        this.frameNo++;
        this.bad(out, host_ms, buf, i, 'CRC mismatch', flen);
        this.inJunk = true;
        i++;
        continue;
      }
      this.frameNo++;
      if (cnt !== nch) {
        this.bad(out, host_ms, buf, i, `frame has ${cnt} channels, the station ${nch}`, flen);
        this.inJunk = true;
        i += flen;
        continue;
      }
      this.inJunk = false;
      const seq = buf[i + 4] | (buf[i + 5] << 8);
      if (this.haveSeq && seq === this.lastSeq) {
        // the same sequence number again: a repeated frame, not 65535 lost ones
        this.bad(out, host_ms, buf, i, `repeated sequence number ${seq}`, flen);
        i += fl;
        continue;
      }
      let tf = this.clock.next(dv.getUint32(i + 6, true)) * 1e-6 + this.rebase;
      let restarted = false;
      if (this.haveSeq && !(tf > this.lastT)) {
        tf = this.clockBack(out, host_ms, tf);
        restarted = true; // the sequence starts afresh too: its jump says nothing about lost frames
      }
      if (this.haveSeq && !restarted) {
        const lost = (seq - this.lastSeq - 1) & 0xffff;
        if (lost !== 0) this.gap(out, host_ms, lost, tf);
        else {
          const dt = tf - this.lastT;
          if (dt > 0) this.dtEst = this.dtEst === this.dtEst ? this.dtEst + 0.05 * (dt - this.dtEst) : dt;
        }
      }
      this.haveSeq = true;
      this.lastSeq = seq;
      this.lastT = tf;
      if (n === cap) {
        finish();
        cap = Math.max(1, Math.min(this.blockCap, Math.floor((len - i) / fl)));
        t = new Float64Array(cap);
        chans = [];
        for (let r = 0; r < nroles; r++) chans.push(new Float64Array(cap));
      }
      t[n] = tf;
      let off = i + HEADER;
      for (let k = 0; k < nch; k++, off += 4) {
        const tg = target[k];
        if (tg >= 0) chans[tg][n] = dv.getInt32(off, true) * scale[k];
      }
      n++;
      this.stats.samples++;
      i += fl;
    }
    finish();
    return i;
  }

  /**
   * The device clock went back (the device restarted, or its clock was set):
   * shift the time base so times stay monotonic, continuing one frame interval
   * after the last sample, and say so.
   */
  private clockBack(out: DecodeResult, host_ms: number, tf: number): number {
    const next = this.lastT + (this.dtEst > 0 ? this.dtEst : 1e-6);
    const step = this.lastT - tf;
    this.rebase += next - tf;
    out.incidents.push({
      kind: 'clock-note',
      severity: 'warning',
      t: next,
      host_ms,
      message: `device clock went back by ${step.toPrecision(6)} s (device restart?); times continue from the last sample`,
      value: step,
      data: { step_s: step, rebase_s: this.rebase },
    });
    return next;
  }

  private gap(out: DecodeResult, host_ms: number, lostSeq: number, t: number): void {
    let lost = lostSeq;
    const span = t - this.lastT;
    if (this.dtEst > 0) {
      // the sequence number wraps every 65536 frames: the device clock tells how many wraps a long gap hid
      const fromClock = Math.round(span / this.dtEst) - 1;
      const wraps = Math.round((fromClock - lost) / 65536);
      if (wraps > 0) lost += wraps * 65536;
    }
    const duration = this.dtEst > 0 ? lost * this.dtEst : Math.max(0, span);
    this.stats.gaps++;
    this.stats.lostFrames += lost;
    out.incidents.push({
      kind: 'gap',
      severity: 'warning',
      t: this.lastT,
      host_ms,
      message: `${lost} frame${lost === 1 ? '' : 's'} lost (sequence ${this.lastSeq} → ${(this.lastSeq + lostSeq + 1) & 0xffff}), about ${duration.toPrecision(3)} s`,
      // every gap's value is its duration in seconds; the frame count is in data
      value: duration,
      data: { lost_frames: lost, duration_s: duration, t_end: t },
    });
  }

  /** A byte that starts no frame: the first of a run counts as one bad record. */
  private junk(out: DecodeResult, host_ms: number, buf: Uint8Array, i: number): void {
    if (this.inJunk) return;
    this.inJunk = true;
    this.bad(out, host_ms, buf, i, 'bytes out of sync', 1); // one byte: the snippet must not depend on how the input was split
  }

  private bad(out: DecodeResult, host_ms: number, buf: Uint8Array, i: number, reason: string, len = 16): void {
    this.stats.badRecords++;
    const end = Math.min(buf.length, i + Math.min(len, MAX_FRAME));
    let hex = '';
    for (let k = i; k < end; k++) hex += (k > i ? ' ' : '') + buf[k].toString(16).padStart(2, '0');
    this.limiter.report(out.incidents, host_ms, reason, hex, this.frameNo, this.lastT === this.lastT ? this.lastT : undefined);
  }
}
