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
 * (hi·10^loDigits + lo)·10^p correctly rounded, for hi < 2^53, lo < 10^loDigits,
 * loDigits ≤ 4 and |p| ≤ 22; NaN when it cannot decide the rounding (ask parseFloat).
 */
export function scaleDecimal(hi: number, lo: number, loDigits: number, p: number): number {
  // m = hi·P + lo exactly as sh + sl
  const P = POW10[loDigits];
  let ph = hi * P;
  let c = SPLIT * hi;
  let ah = c - (c - hi);
  let al = hi - ah;
  c = SPLIT * P;
  let bh = c - (c - P);
  let bl = P - bh;
  const pl = ah * bh - ph + ah * bl + al * bh + al * bl;
  const sh = ph + lo;
  const bv = sh - ph;
  const e1 = ph - (sh - bv) + (lo - bv); // two-sum error
  const sl = pl + e1; // small integers: exact
  let h: number;
  let l: number;
  if (p >= 0) {
    const Q = POW10[p];
    h = sh * Q;
    c = SPLIT * sh;
    ah = c - (c - sh);
    al = sh - ah;
    c = SPLIT * Q;
    bh = c - (c - Q);
    bl = Q - bh;
    l = ah * bh - h + ah * bl + al * bh + al * bl + sl * Q;
  } else {
    const Q = POW10[-p];
    h = sh / Q;
    // remainder sh − h·Q exactly, then the low part of the quotient
    ph = h * Q;
    c = SPLIT * h;
    ah = c - (c - h);
    al = h - ah;
    c = SPLIT * Q;
    bh = c - (c - Q);
    bl = Q - bh;
    const pe = ah * bh - ph + ah * bl + al * bh + al * bl;
    l = (sh - ph - pe + sl) / Q;
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

/**
 * Parse bytes[start, end) as a decimal number: optional blanks, optional sign,
 * digits with an optional point (`.5`, `5.` allowed), optional exponent.
 * Returns NaN for anything else (empty, `nan`, `inf`, stray characters) and for
 * values that overflow to ±Infinity.
 */
export function parseNumber(bytes: Uint8Array, start: number, end: number): number {
  let i = start;
  let e = end;
  while (i < e && isBlank(bytes[i])) i++;
  while (e > i && isBlank(bytes[e - 1])) e--;
  if (i >= e) return NaN;
  const s0 = i;
  let neg = false;
  let c = bytes[i];
  if (c === 45 || c === 43) {
    neg = c === 45;
    i++;
  }
  // significand = m·10^loDigits + lo: m takes digits while it stays exact (< 9e15), lo the rest
  let m = 0;
  let lo = 0;
  let loDigits = 0;
  let digits = 0;
  let frac = 0;
  while (i < e) {
    c = bytes[i] - 48;
    if (c < 0 || c > 9) break;
    if (m < 9e14) m = m * 10 + c;
    else if (loDigits < 5) (lo = lo * 10 + c), loDigits++;
    else loDigits = 99;
    digits++;
    i++;
  }
  if (i < e && bytes[i] === 46) {
    i++;
    while (i < e) {
      c = bytes[i] - 48;
      if (c < 0 || c > 9) break;
      if (m < 9e14) m = m * 10 + c;
      else if (loDigits < 5) (lo = lo * 10 + c), loDigits++;
      else loDigits = 99;
      digits++;
      frac++;
      i++;
    }
  }
  if (digits === 0) return NaN;
  let exp = 0;
  if (i < e && (bytes[i] | 32) === 101) {
    i++;
    let eneg = false;
    if (i < e && (bytes[i] === 45 || bytes[i] === 43)) {
      eneg = bytes[i] === 45;
      i++;
    }
    const es = i;
    while (i < e) {
      c = bytes[i] - 48;
      if (c < 0 || c > 9) break;
      if (exp < 100000) exp = exp * 10 + c;
      i++;
    }
    if (i === es) return NaN;
    if (eneg) exp = -exp;
  }
  if (i !== e) return NaN;
  const p = exp - frac;
  let v = NaN;
  if (p >= -22 && p <= 22) {
    // m is exact: every partial sum stayed below 9e15 < 2^53
    if (loDigits === 0) v = p >= 0 ? m * POW10[p] : m / POW10[-p];
    else if (loDigits <= 4) v = scaleDecimal(m, lo, loDigits, p);
    if (neg) v = -v;
  }
  if (v !== v) {
    v = parseFloat(slowText(bytes, s0, e));
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
