/** The median of a list of numbers. */

/** Median of `xs` (sorted in place; NaN when empty). */
export function median(xs: number[]): number {
  if (xs.length === 0) return NaN;
  xs.sort((a, b) => a - b);
  const h = xs.length >> 1;
  return xs.length & 1 ? xs[h] : 0.5 * (xs[h - 1] + xs[h]);
}
