/** Command-line numbers of seconds and spans (`--from-s`, `--to-s`), checked with the flag named. */
import { UsageError } from '../domain/errors.js';

/** A finite number ≥ 0 (`what` says of what), or bad usage naming the flag; undefined when not given. */
export function nonNegative(flag: string, v: string | undefined, what = 'a number'): number | undefined {
  if (v === undefined) return undefined;
  const x = Number(v);
  if (v.trim() === '' || !Number.isFinite(x) || x < 0) throw new UsageError(`${flag}: must be ${what} ≥ 0 (got "${v}")`);
  return x;
}

/** A span [from_s, to_s) in s since the run's start from two flags; the end must come after the start. */
export function spanArgs(fromFlag: string, from: string | undefined, toFlag: string, to: string | undefined): { from_s?: number; to_s?: number } {
  const from_s = nonNegative(fromFlag, from, 'a number of seconds'), to_s = nonNegative(toFlag, to, 'a number of seconds');
  if (from_s !== undefined && to_s !== undefined && !(to_s > from_s)) throw new UsageError(`${toFlag}: must be after ${fromFlag} (got ${to_s} ≤ ${from_s})`);
  return { from_s, to_s };
}
