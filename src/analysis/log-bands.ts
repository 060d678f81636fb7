/**
 * Logarithmic frequency bands over an evenly spaced spectrum: a spectrum of
 * half a million bins, read on a log axis, is averaged into bands of equal
 * width in log f (bins at the low end, narrower than a band, stay single).
 * Averaging m bins of a Welch estimate divides its variance by about m
 * (common practice, no source), so the high bands are the steadiest.
 */

/** Bands as ranges of bin indices [lo, hi) and the mean frequency of their bins. */
export interface LogBands {
  lo: Int32Array;
  hi: Int32Array;
  /** mean frequency of each band's bins, Hz */
  frequency_Hz: Float64Array;
}

/** Options of logBands. */
export interface LogBandsOptions {
  /** bands per decade (default 20) */
  perDecade?: number;
  /** first bin included (default 1: no DC) */
  firstBin?: number;
  /** last bin included (default the last) */
  lastBin?: number;
}

/** Group bins k (frequency k·df) into bands of equal log width; empty bands are skipped. */
export function logBands(nBins: number, df_Hz: number, opts: LogBandsOptions = {}): LogBands {
  const per = opts.perDecade ?? 20;
  const first = Math.max(1, opts.firstBin ?? 1);
  const last = Math.min(nBins - 1, opts.lastBin ?? nBins - 1);
  if (!(per > 0)) throw new RangeError(`logBands: perDecade must be > 0, got ${per}`);
  const lo: number[] = [], hi: number[] = [], f: number[] = [];
  const step = Math.pow(10, 1 / per);
  let k = first;
  let edge = first; // band edges in units of df
  while (k <= last) {
    while (edge <= k) edge *= step;
    // bins whose index is below the next edge, at least one
    const end = Math.min(last + 1, Math.max(k + 1, Math.ceil(edge)));
    lo.push(k);
    hi.push(end);
    f.push(((k + end - 1) / 2) * df_Hz);
    k = end;
  }
  return { lo: Int32Array.from(lo), hi: Int32Array.from(hi), frequency_Hz: Float64Array.from(f) };
}

/** Mean of `values` over each band. */
export function bandMeans(values: ArrayLike<number>, bands: LogBands): Float64Array {
  const out = new Float64Array(bands.lo.length);
  for (let b = 0; b < out.length; b++) {
    let s = 0;
    for (let k = bands.lo[b]; k < bands.hi[b]; k++) s += values[k];
    out[b] = s / (bands.hi[b] - bands.lo[b]);
  }
  return out;
}
