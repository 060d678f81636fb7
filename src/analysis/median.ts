/** The median of a list of numbers. */

/** Median of `xs` (sorted in place; NaN when empty). */
export function median(xs: number[]): number {
  if (xs.length === 0) return NaN;
  xs.sort((a, b) => a - b);
  const h = xs.length >> 1;
  return xs.length & 1 ? xs[h] : 0.5 * (xs[h - 1] + xs[h]);
}

/** Median of the first n entries of `xs` by selection, O(n) (reorders them; NaN when n = 0). */
export function medianSelect(xs: Float64Array, n = xs.length): number {
  if (n === 0) return NaN;
  const h = n >> 1;
  const hi = select(xs, n, h);
  if (n & 1) return hi;
  // the lower middle is the largest of the entries left of h after the selection
  let lo = -Infinity;
  for (let i = 0; i < h; i++) if (xs[i] > lo) lo = xs[i];
  return 0.5 * (lo + hi);
}

/** The k-th smallest of xs[0..n) (Hoare's selection; leaves smaller entries left of k). */
function select(xs: Float64Array, n: number, k: number): number {
  let left = 0, right = n - 1;
  while (left < right) {
    const pivot = xs[(left + right) >> 1];
    let i = left, j = right;
    while (i <= j) {
      while (xs[i] < pivot) i++;
      while (xs[j] > pivot) j--;
      if (i <= j) {
        const t = xs[i]; xs[i] = xs[j]; xs[j] = t;
        i++; j--;
      }
    }
    if (k <= j) right = j;
    else if (k >= i) left = i;
    else break;
  }
  return xs[k];
}
