/**
 * A decimal number parser straight over bytes, for the `lines` decoder's hot
 * path: no string per field. Results equal `parseFloat` of the same text.
 *
 * Fast path (Clinger's exact case, W. D. Clinger, "How to read floating point
 * numbers accurately", PLDI 1990): when the decimal significand m is an
 * integer ≤ 2^53 and the power of ten |e| ≤ 22, both m and 10^|e| are exact
 * doubles, so one IEEE multiplication or division gives the correctly
 * rounded result. Other forms (17-digit significands, large exponents) are
 * handed to `parseFloat` after the same syntax check.
 */

const POW10 = new Float64Array(23);
for (let i = 0, p = 1; i < 23; i++, p *= 10) POW10[i] = p; // 10^0 … 10^22 are exact doubles
const TWO53 = 9007199254740992;

const decoder = new TextDecoder('latin1');

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
  let m = 0;
  let digits = 0;
  let frac = 0;
  while (i < e) {
    c = bytes[i] - 48;
    if (c < 0 || c > 9) break;
    m = m * 10 + c;
    digits++;
    i++;
  }
  if (i < e && bytes[i] === 46) {
    i++;
    while (i < e) {
      c = bytes[i] - 48;
      if (c < 0 || c > 9) break;
      m = m * 10 + c;
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
  let v: number;
  if (m <= TWO53 && p >= -22 && p <= 22) {
    // m is exact: every partial sum was below the final m ≤ 2^53
    v = p >= 0 ? m * POW10[p] : m / POW10[-p];
    if (neg) v = -v;
  } else {
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
