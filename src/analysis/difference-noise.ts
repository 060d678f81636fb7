/** The white noise of a record, from its high-order differences. */

/**
 * Noise standard deviation from the k-th differences of consecutive unmasked
 * samples (k = 6): Var(Δᵏ of white noise) = C(2k, k)·σ², while a sine with
 * ≥ 20 samples per period is suppressed by (2·sin(π/20))⁶ ≈ 1e-3. Common
 * practice, no source. It sees only the high-frequency noise: after a
 * low-pass filter it underestimates σ — so the pipeline measures the readout
 * noise on the samples before decimation (pipelines/condition.ts).
 */
export function noiseFromDifferences(y: Float64Array, mask?: Uint8Array, order = 6): number {
  const k = order;
  const coef = new Float64Array(k + 1); // (−1)^j·C(k, j)
  let norm = 1; // C(2k, k) = Σ C(k, j)²
  coef[0] = 1;
  for (let j = 1; j <= k; j++) coef[j] = (-coef[j - 1] * (k - j + 1)) / j;
  for (let i = 1; i <= k; i++) norm = (norm * (k + i)) / i;
  let sum = 0, count = 0, run = 0;
  for (let i = 0; i < y.length; i++) {
    if ((mask && mask[i]) || !Number.isFinite(y[i])) { run = 0; continue; }
    if (++run <= k) continue;
    let d = 0;
    for (let j = 0; j <= k; j++) d += coef[j] * y[i - j];
    sum += d * d; count++;
  }
  return count > 0 ? Math.sqrt(sum / count / norm) : NaN;
}

/**
 * The same estimate over a stream cut into blocks anywhere: the last k samples
 * and the run of unmasked ones carry over, so each sample's difference is the
 * one the whole record would give. `push` returns, for each kept (decimated)
 * sample, the mean of Δᵏ²/C(2k, k) over the input samples since the previous
 * kept one — a variance per input sample, NaN where no difference was seen.
 */
export class DifferenceNoiseStream {
  private readonly coef: Float64Array;
  private readonly norm: number;
  private readonly tail: Float64Array; // the last k samples, oldest first
  private run = 0;
  private sum = 0;
  private count = 0;

  constructor(private readonly k = 6) {
    this.coef = new Float64Array(k + 1);
    this.coef[0] = 1;
    let norm = 1;
    for (let j = 1; j <= k; j++) this.coef[j] = (-this.coef[j - 1] * (k - j + 1)) / j;
    for (let i = 1; i <= k; i++) norm = (norm * (k + i)) / i;
    this.norm = norm;
    this.tail = new Float64Array(k);
  }

  /** Samples y[0..n) with mask (1 = unusable); `kept` the indices (ascending, < n) of the samples handed on. */
  push(y: Float64Array, mask: Uint8Array, n: number, kept: Int32Array): Float64Array {
    const { k, coef, tail } = this;
    const out = new Float64Array(kept.length);
    let next = 0;
    for (let i = 0; i < n; i++) {
      const v = y[i];
      if (mask[i] || !Number.isFinite(v)) this.run = 0;
      else {
        this.run++;
        if (this.run > k) {
          // y[i − j] is y itself for j ≤ i, else the carried tail
          let d = 0;
          for (let j = 0; j <= k; j++) d += coef[j] * (i - j >= 0 ? y[i - j] : tail[k + i - j]);
          this.sum += (d * d) / this.norm;
          this.count++;
        }
      }
      while (next < kept.length && kept[next] === i) {
        out[next++] = this.count > 0 ? this.sum / this.count : NaN;
        this.sum = 0;
        this.count = 0;
      }
    }
    // carry the last k samples (masked ones too: the run count keeps them out)
    if (n >= k) tail.set(y.subarray(n - k, n));
    else {
      tail.copyWithin(0, n);
      tail.set(y.subarray(0, n), k - n);
    }
    return out;
  }
}
