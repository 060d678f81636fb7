/**
 * A decimal number parser straight over bytes, for the `lines` decoder's hot
 * path: no string per field. Results equal `parseFloat` of the same text.
 *
 * Fast path (Clinger's exact case, W. D. Clinger, "How to read floating point
 * numbers accurately", PLDI 1990): when the decimal significand m is an
 * integer ≤ 2^53 and the power of ten |e| ≤ 22, both m and 10^|e| are exact
 * doubles, so one IEEE multiplication or division gives the correctly
 * rounded result.
 *
 * Significands of 16 to 19 digits (the shortest round-trip text of most
 * doubles has 16 or 17) go through `scaleDecimal`: m·10^e in double-double
 * arithmetic (Dekker's exact product, T. J. Dekker, "A floating-point
 * technique for extending the available precision", Numer. Math. 18, 1971),
 * about 100 correct bits, then rounded once; when the exact value lies too
 * close to a rounding boundary to decide, it answers NaN and the caller asks
 * `parseFloat`. Other forms (more digits, large exponents) go to `parseFloat`
 * after the same syntax check.
 */

const POW10 = new Float64Array(23);
for (let i = 0, p = 1; i < 23; i++, p *= 10) POW10[i] = p; // 10^0 … 10^22 are exact doubles

const decoder = new TextDecoder('latin1');
const F64 = new Float64Array(1);
const U32 = new Uint32Array(F64.buffer);
const HI = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1 ? 1 : 0; // index of the high word (1 on little-endian)

/** Dekker's split constant 2^27 + 1. */
const SPLIT = 134217729;

/**
 * The rounding error of a·b: a·b − fl(a·b) exactly (Dekker's two-product by
 * splitting each factor into 26-bit halves; no fused multiply-add needed).
 */
function productError(a: number, b: number, ab: number): number {
  let c = SPLIT * a;
  const ah = c - (c - a);
  const al = a - ah;
  c = SPLIT * b;
  const bh = c - (c - b);
  const bl = b - bh;
  return ah * bh - ab + ah * bl + al * bh + al * bl;
}

/**
 * (hi·10^loDigits + lo)·10^p correctly rounded, for hi < 2^53, lo < 10^loDigits,
 * loDigits ≤ 4 and |p| ≤ 22; NaN when it cannot decide the rounding (ask parseFloat).
 */
export function scaleDecimal(hi: number, lo: number, loDigits: number, p: number): number {
  // m = hi·P + lo exactly as sh + sl
  const P = POW10[loDigits];
  const ph = hi * P;
  const pl = productError(hi, P, ph);
  const sh = ph + lo;
  const bv = sh - ph;
  const e1 = ph - (sh - bv) + (lo - bv); // two-sum error
  const sl = pl + e1; // small integers: exact
  let h: number;
  let l: number;
  if (p >= 0) {
    const Q = POW10[p];
    h = sh * Q;
    l = productError(sh, Q, h) + sl * Q;
  } else {
    const Q = POW10[-p];
    h = sh / Q;
    // remainder sh − h·Q exactly, then the low part of the quotient
    const hq = h * Q;
    l = (sh - hq - productError(h, Q, hq) + sl) / Q;
  }
  const v = h + l;
  const e = h - v + l; // what the rounding dropped
  F64[0] = v;
  const ex = (U32[HI] >>> 20) & 0x7ff;
  if (ex <= 60 || ex >= 2040 || (U32[HI] & 0xfffff) === 0) return NaN; // tiny, huge, or a power of two's uneven neighbours
  // half an ulp of v
  U32[HI] = (ex - 53) << 20;
  U32[1 - HI] = 0;
  const half = F64[0];
  // the double-double carries ~2^-100 relative error: refuse when that could cross the midpoint
  if (Math.abs(Math.abs(e) - half) <= half * 2 ** -40) return NaN;
  return v;
}

function isBlank(c: number): boolean {
  return c === 32 || c === 9 || c === 13;
}

/** What `scanNumber` found: whether the syntax is a number, and its value when the fast path decides it (else NaN). */
export const scanned = { ok: false, value: NaN };

/**
 * Scan a decimal number at bytes[i, end): optional sign, digits with an
 * optional point (`.5`, `5.`), optional exponent. Returns the index of the
 * first byte not taken. `scanned.ok` tells whether a number was read;
 * `scanned.value` is its correctly rounded value, or NaN when the fast paths
 * cannot decide (more digits, a larger power of ten): the caller then asks
 * `parseFloat` of the same text. No allocation: one result slot, reused.
 */
export function scanNumber(bytes: Uint8Array, i: number, end: number): number {
  scanned.ok = false;
  scanned.value = NaN;
  let neg = false;
  const c = i < end ? bytes[i] : 0;
  if (c === 45 || c === 43) {
    neg = c === 45;
    i++;
  }
  // significand = m·10^loDigits + lo: m takes digits while it stays exact (< 9e15), lo the next ≤ 4;
  // more digits (loDigits = 99) leave the fast path
  let m = 0;
  let lo = 0;
  let loDigits = 0;
  let digits = 0;
  let pointAt = -1; // digits read before the decimal point
  for (; i < end; i++) {
    const d = bytes[i] - 48;
    if (d >= 0 && d <= 9) {
      if (m < 9e14) m = m * 10 + d;
      else if (loDigits < 5) (lo = lo * 10 + d), loDigits++;
      else loDigits = 99;
      digits++;
    } else if (d === -2 && pointAt < 0) pointAt = digits; // '.'
    else break;
  }
  const frac = pointAt < 0 ? 0 : digits - pointAt;
  if (digits === 0) return i;
  let exp = 0;
  if (i < end && (bytes[i] | 32) === 101) {
    let k = i + 1;
    let eneg = false;
    if (k < end && (bytes[k] === 45 || bytes[k] === 43)) {
      eneg = bytes[k] === 45;
      k++;
    }
    const es = k;
    for (; k < end; k++) {
      const d = bytes[k] - 48;
      if (d < 0 || d > 9) break;
      if (exp < 100000) exp = exp * 10 + d;
    }
    if (k === es) return k; // "1e" or "1e+": not a number
    i = k;
    if (eneg) exp = -exp;
  }
  scanned.ok = true;
  const p = exp - frac;
  if (p >= -22 && p <= 22) {
    // m is exact: every partial sum stayed below 9e15 < 2^53
    let v = NaN;
    if (loDigits === 0) v = p >= 0 ? m * POW10[p] : m / POW10[-p];
    else if (loDigits <= 4) v = scaleDecimal(m, lo, loDigits, p);
    scanned.value = neg ? -v : v;
  }
  return i;
}

/**
 * Parse bytes[start, end) as a decimal number: optional blanks, then what
 * `scanNumber` reads, then optional blanks. Returns NaN for anything else
 * (empty, `nan`, `inf`, stray characters) and for values that overflow to ±Infinity.
 */
export function parseNumber(bytes: Uint8Array, start: number, end: number): number {
  let i = start;
  let e = end;
  while (i < e && isBlank(bytes[i])) i++;
  while (e > i && isBlank(bytes[e - 1])) e--;
  if (i >= e) return NaN;
  if (scanNumber(bytes, i, e) !== e || !scanned.ok) return NaN;
  let v = scanned.value;
  if (v !== v) {
    v = parseFloat(slowText(bytes, i, e));
    if (!Number.isFinite(v)) return NaN;
  }
  return v;
}

function slowText(bytes: Uint8Array, s: number, e: number): string {
  if (e - s > 64) return decoder.decode(bytes.subarray(s, e));
  let t = '';
  for (let i = s; i < e; i++) t += String.fromCharCode(bytes[i]);
  return t;
}
