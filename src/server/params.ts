/**
 * The HTTP boundary's checks: path and query parameters validated once, with
 * a 400 naming the parameter (docs/dashboard.md). An unknown parameter is
 * refused too, so a typo (`?form_s=`) is not silently ignored.
 */
import { parseDateArg } from '../../db/runs.js';

/** A bad request: answered 400 with `{ "error": message }`. */
export class BadRequest extends Error {
  readonly statusCode = 400;
}

/** An unknown run or fibre: answered 404. */
export class NotFound extends Error {
  readonly statusCode = 404;
}

type Query = Record<string, unknown>;

/** Refuse parameters not in `allowed` (the token is allowed everywhere) and parameters given twice. */
export function checkQuery(query: unknown, allowed: readonly string[]): Query {
  const q = (query ?? {}) as Query;
  for (const [k, v] of Object.entries(q)) {
    if (k !== 'token' && !allowed.includes(k)) {
      throw new BadRequest(`${k}: unknown parameter${allowed.length ? ` (this path takes ${allowed.join(', ')})` : ' (this path takes none)'}`);
    }
    if (Array.isArray(v)) throw new BadRequest(`${k}: give it once`);
  }
  return q;
}

/** The `:run` path parameter: a run number. */
export function runParam(v: unknown): number {
  const s = String(v ?? '');
  if (!/^[1-9][0-9]{0,14}$/.test(s)) throw new BadRequest(`run: must be a run number (got "${s}")`);
  return Number(s);
}

/** An optional string parameter; empty counts as absent (a filter form left blank). */
export function textParam(q: Query, name: string): string | undefined {
  const v = q[name];
  if (v === undefined || v === '') return undefined;
  return String(v);
}

/** An optional finite number of seconds. */
export function secondsParam(q: Query, name: string): number | undefined {
  const v = textParam(q, name);
  if (v === undefined) return undefined;
  const x = Number(v);
  if (v.trim() === '' || !Number.isFinite(x)) throw new BadRequest(`${name}: must be a number of seconds (got "${v}")`);
  return x;
}

/** An optional whole number within [lo, hi]. */
export function integerParam(q: Query, name: string, lo: number, hi: number): number | undefined {
  const v = textParam(q, name);
  if (v === undefined) return undefined;
  const x = Number(v);
  if (!/^\s*\d+\s*$/.test(v) || !Number.isInteger(x) || x < lo || x > hi) throw new BadRequest(`${name}: must be a whole number from ${lo} to ${hi} (got "${v}")`);
  return x;
}

/** An optional date (YYYY-MM-DD or ISO 8601, as `--since`), as UTC ms. */
export function dateParam(q: Query, name: string): number | undefined {
  const v = textParam(q, name);
  if (v === undefined) return undefined;
  try {
    return parseDateArg(v);
  } catch {
    throw new BadRequest(`${name}: "${v}" is not YYYY-MM-DD or an ISO 8601 time`);
  }
}

/** A span [from, to) of optional bounds: `to` must be after `from`. */
export function spanParams(q: Query, fromName: string, toName: string, parse: (q: Query, n: string) => number | undefined): { from?: number; to?: number } {
  const from = parse(q, fromName), to = parse(q, toName);
  if (from !== undefined && to !== undefined && !(to > from)) throw new BadRequest(`${toName}: must be after ${fromName} (got ${q[toName]} ≤ ${q[fromName]})`);
  return { from, to };
}

/** A number of seconds ≥ 0, optional (400 naming it otherwise). */
export function nonNegativeSecondsParam(q: Query, name: string): number | undefined {
  const v = secondsParam(q, name);
  if (v !== undefined && v < 0) throw new BadRequest(`${name}: must be a number of seconds ≥ 0 (got "${q[name]}")`);
  return v;
}

/** The span [from_s, to_s) of a run, s since its start, as the per-run summaries take it: both optional, neither negative, to_s after from_s. */
export function runSpanParams(q: Query): { from?: number; to?: number } {
  return spanParams(q, 'from_s', 'to_s', nonNegativeSecondsParam);
}
