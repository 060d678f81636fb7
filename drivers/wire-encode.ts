/**
 * Writers of the two wire formats (docs/wire.md), for the simulator and the tests:
 * what they write, the decoders read back to the same numbers.
 */
import type { ColumnRole, ValueRole } from '../src/domain/block.js';
import { crc16CcittFalse } from './crc16.js';

/** Options of encodeLines. */
export interface EncodeLinesOptions {
  /** field separator: a literal string, or 'tab' / 'spaces' (default ',') */
  separator?: string;
  /** significant digits of every number (default: the shortest text that reads back to the same float64) */
  digits?: number;
}

const TIME_UNIT: Record<string, number> = { t_s: 1, t_ms: 1e3, t_us: 1e6 };

function fmt(v: number, digits: number | undefined): string {
  if (digits === undefined) return String(v); // ECMAScript Number::toString: shortest round-trip form
  return String(Number(v.toPrecision(digits)));
}

/**
 * `lines` text, one line per sample: time columns in their unit (t_s seconds,
 * t_ms milliseconds, t_us microseconds) from t_s, value columns from cols,
 * `_` columns written as 0. Each line ends in LF.
 */
export function encodeLines(
  t_s: Float64Array,
  cols: Partial<Record<ValueRole, Float64Array>>,
  columns: ColumnRole[],
  opts: EncodeLinesOptions = {},
): string {
  const sep = opts.separator === 'tab' ? '\t' : opts.separator === 'spaces' ? ' ' : (opts.separator ?? ',');
  const digits = opts.digits;
  if (digits !== undefined && !(Number.isInteger(digits) && digits >= 1 && digits <= 21)) throw new TypeError(`encodeLines: digits must be an integer 1…21, got ${digits}`);
  const n = t_s.length;
  const src: (Float64Array | null)[] = [];
  const mul: number[] = [];
  for (const c of columns) {
    if (c === '_') {
      src.push(null);
      mul.push(0);
    } else if (c in TIME_UNIT) {
      src.push(t_s);
      mul.push(TIME_UNIT[c]);
    } else {
      const a = cols[c as ValueRole];
      if (!a) throw new TypeError(`encodeLines: column "${c}" has no values`);
      if (a.length < n) throw new TypeError(`encodeLines: column "${c}" has ${a.length} values, the times ${n}`);
      src.push(a);
      mul.push(1);
    }
  }
  const lines: string[] = new Array(n);
  for (let i = 0; i < n; i++) {
    let s = '';
    for (let c = 0; c < src.length; c++) {
      if (c > 0) s += sep;
      const a = src[c];
      s += a === null ? '0' : fmt(mul[c] === 1 ? a[i] : a[i] * mul[c], digits);
    }
    lines[i] = s;
  }
  return n > 0 ? lines.join('\n') + '\n' : '';
}

/**
 * `frames` bytes, one frame per sample: sequence numbers from startSeq
 * (wrapped to u16), device time tMicros[i] in µs (wrapped to u32), one i32 per
 * channel from values[k][i], CRC-16/CCITT-FALSE over bytes 2 … 9+4n.
 */
export function encodeFrames(startSeq: number, tMicros: Float64Array, values: Int32Array[]): Uint8Array {
  const nch = values.length;
  if (nch < 1 || nch > 16) throw new TypeError(`encodeFrames: 1 to 16 channels, got ${nch}`);
  const n = tMicros.length;
  for (let k = 0; k < nch; k++) if (values[k].length < n) throw new TypeError(`encodeFrames: channel ${k} has ${values[k].length} values, the times ${n}`);
  const fl = 12 + 4 * nch;
  const out = new Uint8Array(n * fl);
  const dv = new DataView(out.buffer);
  const U32 = 2 ** 32;
  for (let i = 0, o = 0; i < n; i++, o += fl) {
    out[o] = 0xa7;
    out[o + 1] = 0x3c;
    out[o + 2] = 1;
    out[o + 3] = nch;
    dv.setUint16(o + 4, (startSeq + i) & 0xffff, true);
    const us = Math.floor(tMicros[i]);
    dv.setUint32(o + 6, ((us % U32) + U32) % U32, true);
    for (let k = 0; k < nch; k++) dv.setInt32(o + 10 + 4 * k, values[k][i], true);
    dv.setUint16(o + 10 + 4 * nch, crc16CcittFalse(out, o + 2, o + 10 + 4 * nch), true);
  }
  return out;
}
