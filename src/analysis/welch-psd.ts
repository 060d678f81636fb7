/**
 * Welch's power spectral density, streamed: samples are pushed stretch by
 * stretch, cut into power-of-two segments with 50 % overlap, each detrended,
 * Hann-windowed (periodic form, which sums to a constant at 50 % overlap) and
 * transformed with fft.js; the periodograms are averaged. A stretch ends at a
 * gap: its partial segment is dropped, so no segment straddles a gap. Memory
 * is a few segments' worth whatever the record length: the transform is held
 * here with its own output array, reused for every segment (src/analysis/fft.ts's
 * shared plans would copy the input and allocate a power array each time,
 * megabytes per segment at the sizes used here); as there, only bins 0…N/2 of
 * `realTransform`'s output are filled, and only those are read.
 *
 * One-sided normalisation (P. D. Welch, IEEE Trans. Audio Electroacoust. 15,
 * 70 (1967); the same as scipy.signal.welch with scaling "density"):
 * S_k = 2·|X_k|²/(f_s·Σw²) for 0 < k < N/2, and half that at k = 0 and N/2,
 * so Σ_k S_k·Δf = Σ(w·x)²/Σw², the windowed mean square (Parseval); white
 * noise of variance σ² gives S = 2σ²/f_s.
 */
import FFT from 'fft.js';

/** Options of WelchPsd. */
export interface WelchOptions {
  /** samples per segment: a power of two ≥ 8 */
  segment: number;
  /** sample interval, s */
  dt_s: number;
  /** removed from each segment before the window: a least-squares line (default), the mean, or nothing */
  detrend?: 'linear' | 'mean' | 'none';
}

/** An averaged spectrum: bins k = 0…N/2 at k/(N·Δt). */
export interface WelchResult {
  /** bin frequencies, Hz */
  frequency_Hz: Float64Array;
  /** one-sided PSD, (unit of x)²/Hz */
  psd: Float64Array;
  /** segments averaged */
  segments: number;
  /** bin spacing 1/(N·Δt), Hz */
  df_Hz: number;
}

/** Accumulates Welch's estimate over pushed stretches of uniformly sampled data. */
export class WelchPsd {
  readonly segment: number;
  readonly dt_s: number;
  private readonly detrend: 'linear' | 'mean' | 'none';
  private readonly window: Float64Array;
  private readonly windowPower: number; // Σw²
  private readonly buf: Float64Array;
  private readonly work: Float64Array;
  private readonly fft: FFT;
  private readonly spectrum: Float64Array; // interleaved re/im, 2N
  private fill = 0;
  private readonly sum: Float64Array;
  private count = 0;

  constructor(opts: WelchOptions) {
    const n = opts.segment;
    if (!Number.isInteger(n) || n < 8 || (n & (n - 1)) !== 0) throw new RangeError(`WelchPsd: segment must be a power of two ≥ 8, got ${n}`);
    if (!(opts.dt_s > 0) || !Number.isFinite(opts.dt_s)) throw new RangeError(`WelchPsd: dt_s must be > 0, got ${opts.dt_s}`);
    this.segment = n;
    this.dt_s = opts.dt_s;
    this.detrend = opts.detrend ?? 'linear';
    this.window = new Float64Array(n);
    let s2 = 0;
    for (let i = 0; i < n; i++) {
      const w = 0.5 * (1 - Math.cos((2 * Math.PI * i) / n));
      this.window[i] = w;
      s2 += w * w;
    }
    this.windowPower = s2;
    this.buf = new Float64Array(n);
    this.work = new Float64Array(n);
    this.fft = new FFT(n);
    this.spectrum = new Float64Array(2 * n);
    this.sum = new Float64Array(n / 2 + 1);
  }

  /** Segments averaged so far. */
  get segments(): number {
    return this.count;
  }

  /** Append x[from…to) to the current stretch; full segments are transformed as they complete. */
  push(x: ArrayLike<number>, from = 0, to = x.length): void {
    const n = this.segment;
    const half = n >>> 1;
    let i = from;
    while (i < to) {
      const take = Math.min(n - this.fill, to - i);
      for (let j = 0; j < take; j++) this.buf[this.fill + j] = x[i + j];
      this.fill += take;
      i += take;
      if (this.fill === n) {
        this.transform();
        // 50 % overlap: the second half starts the next segment
        this.buf.copyWithin(0, half);
        this.fill = half;
      }
    }
  }

  /** End the current stretch (a gap follows): its partial segment is dropped. */
  breakStretch(): void {
    this.fill = 0;
  }

  /** The averaged one-sided PSD, or null when no full segment was seen. */
  result(): WelchResult | null {
    if (this.count === 0) return null;
    const n = this.segment;
    const df = 1 / (n * this.dt_s);
    const m = n / 2 + 1;
    const frequency_Hz = new Float64Array(m);
    const psd = new Float64Array(m);
    for (let k = 0; k < m; k++) {
      frequency_Hz[k] = k * df;
      psd[k] = this.sum[k] / this.count;
    }
    return { frequency_Hz, psd, segments: this.count, df_Hz: df };
  }

  private transform(): void {
    const n = this.segment;
    const x = this.work;
    x.set(this.buf);
    if (this.detrend !== 'none') {
      // least-squares line over the index (centred, so slope and mean are independent)
      let mean = 0;
      for (let i = 0; i < n; i++) mean += x[i];
      mean /= n;
      let slope = 0;
      if (this.detrend === 'linear') {
        const c = (n - 1) / 2;
        let sxy = 0;
        for (let i = 0; i < n; i++) sxy += (i - c) * (x[i] - mean);
        slope = sxy / ((n * (n * n - 1)) / 12);
        for (let i = 0; i < n; i++) x[i] -= mean + slope * (i - c);
      } else {
        for (let i = 0; i < n; i++) x[i] -= mean;
      }
    }
    for (let i = 0; i < n; i++) x[i] *= this.window[i];
    const X = this.spectrum;
    this.fft.realTransform(X, x);
    const scale = (2 * this.dt_s) / this.windowPower; // 2/(f_s·Σw²)
    const last = n / 2;
    for (let k = 0; k <= last; k++) {
      const p = X[2 * k] * X[2 * k] + X[2 * k + 1] * X[2 * k + 1];
      this.sum[k] += (k === 0 || k === last ? scale / 2 : scale) * p;
    }
    this.count++;
  }
}
