/**
 * FFT period seed for one window: the starting point of the damped-sine fit.
 *
 * Steps: remove the mean and a linear trend (least squares over unmasked
 * samples), apply a Hann window, zero-pad to a power of two (`pad`× the
 * record), take the strongest local peak of the power spectrum inside the
 * allowed period band, interpolate between bins, then get amplitude, phase
 * and equilibrium by a linear least-squares fit of [1, t, cos, sin] at the
 * found frequency (a direct solve, so it is sound with only 2–3 periods,
 * where the FFT's own amplitude is biased by the window and leakage).
 *
 * Bin interpolation: log-parabolic ("Gaussian") interpolation of the power of
 * the Hann-windowed, zero-padded spectrum. The log of the Hann main lobe is
 * close to a parabola near its top, so the vertex of a parabola through the
 * three log-power bins is nearly unbiased (bias a small fraction of a
 * zero-padded bin, and zero padding by 4 makes the bins 4× finer). It needs
 * only the power, works with any padding; Jacobsen's and Quinn's estimators
 * use the complex bins and are derived for the rectangular window and no
 * padding, which we do not use because the Hann window is what keeps the DC
 * and trend residue from swamping a 2-period record. The remaining error is
 * dominated by the negative-frequency image in very short records; the fit
 * removes it.
 *
 * Input is assumed uniformly sampled; masked samples are set to the trend
 * (zero after detrending) so the sample grid stays uniform.
 */
import { nextPow2, realSpectrumPower } from './fft.js';
import { spdSolve } from './linalg.js';

/** Options of `periodSeed`. */
export interface PeriodSeedOptions {
  /** nonzero = exclude that sample (default: none) */
  mask?: Uint8Array;
  /** shortest period searched, s (default 3 samples) */
  minPeriod_s?: number;
  /** longest period searched, s (default record length / 1.5) */
  maxPeriod_s?: number;
  /** zero-pad factor, the FFT is ≥ pad × record (default 4) */
  pad?: number;
  /** previous window's period, s: search ±25 % around it first (default none) */
  hint_s?: number;
  /** time that phase and equilibrium refer to, s (default middle of the record) */
  tMid?: number;
  /** least peak-to-median spectral power ratio to accept a peak (default 20) */
  minSnr?: number;
}

/** The seed of a damped-sine fit; numbers are NaN when `ok` is false. */
export interface PeriodSeed {
  ok: boolean;
  /** why no seed was found: 'too-few-samples', 'non-finite-input', 'non-uniform-sampling', 'no-oscillation', 'bad-input' */
  reason?: string;
  period_s: number;
  frequency_Hz: number;
  /** amplitude of A·cos(2πf(t − tMid) + φ), same unit as y */
  amplitude: number;
  phase_rad: number;
  /** level of the linear trend at tMid */
  equilibrium: number;
  /** slope of the linear trend, y-unit per s */
  drift_per_s: number;
  /** peak power over the median power in the searched band (a ratio of powers) */
  snr: number;
  /** the reference time used for phase and equilibrium, s */
  tMid: number;
}

function fail(reason: string, tMid = NaN): PeriodSeed {
  return {
    ok: false, reason, period_s: NaN, frequency_Hz: NaN, amplitude: NaN, phase_rad: NaN,
    equilibrium: NaN, drift_per_s: NaN, snr: NaN, tMid,
  };
}

/** Estimate period, amplitude, phase and equilibrium of the dominant oscillation in a uniformly sampled window. */
export function periodSeed(t: Float64Array, y: Float64Array, opts: PeriodSeedOptions = {}): PeriodSeed {
  const n = t.length;
  if (y.length !== n) return fail('bad-input');
  const mask = opts.mask;
  if (mask && mask.length !== n) return fail('bad-input');
  const pad = opts.pad ?? 4;
  const minSnr = opts.minSnr ?? 20;
  if (n < 8) return fail('too-few-samples');
  const dt = (t[n - 1] - t[0]) / (n - 1);
  if (!(dt > 0) || !Number.isFinite(dt)) return fail('non-uniform-sampling');
  const tMid = opts.tMid ?? 0.5 * (t[0] + t[n - 1]);

  // trend by least squares on unmasked samples
  // a masked sample's time is not trusted either (a placeholder): the grid is checked between unmasked ones
  let m = 0, st = 0, sy = 0, last = -1;
  for (let i = 0; i < n; i++) {
    if (mask && mask[i]) continue;
    const ti = t[i], yi = y[i];
    if (!Number.isFinite(ti) || !Number.isFinite(yi)) return fail('non-finite-input', tMid);
    if (last >= 0 && Math.abs(t[i] - t[last] - (i - last) * dt) > 0.5 * dt) return fail('non-uniform-sampling', tMid);
    last = i;
    m++; st += ti - tMid; sy += yi;
  }
  if (m < 8) return fail('too-few-samples', tMid);
  const tBar = st / m, yBar = sy / m;
  let sxx = 0, sxy = 0;
  for (let i = 0; i < n; i++) {
    if (mask && mask[i]) continue;
    const u = t[i] - tMid - tBar;
    sxx += u * u; sxy += u * (y[i] - yBar);
  }
  const slope = sxx > 0 ? sxy / sxx : 0;

  // Coarse spectrum at the smallest power of two ≥ n, then the zero-padded
  // spectrum (size nfftF = nextPow2(pad·n)) evaluated only near the coarse
  // peak by direct DTFT sums: the same numbers as the full padded FFT at
  // those bins, for a fraction of its cost.
  const nfft = nextPow2(n);
  const x = new Float64Array(n);
  const hw = n > 1 ? (2 * Math.PI) / (n - 1) : 0;
  for (let i = 0; i < n; i++) {
    if (mask && mask[i]) continue;
    const r = y[i] - yBar - slope * (t[i] - tMid - tBar);
    x[i] = r * 0.5 * (1 - Math.cos(hw * i));
  }
  const power = realSpectrumPower(x, nfft);
  const half = nfft >>> 1;
  const df = 1 / (nfft * dt);
  const record = n * dt;
  const minP = Math.max(opts.minPeriod_s ?? 3 * dt, 2 * dt);
  const maxP = Math.min(opts.maxPeriod_s ?? record / 1.5, record);
  // never closer to DC than one natural bin (a full period inside the record)
  const kLo = Math.max(Math.ceil(1 / (maxP * df)), Math.ceil(nfft / n), 1);
  const kHi = Math.min(Math.floor(1 / (minP * df)), half - 1);
  if (kHi <= kLo) return fail('no-oscillation', tMid);

  let found = -1;
  let snr = 0;
  if (opts.hint_s !== undefined && opts.hint_s > 0) {
    const a = Math.max(kLo, Math.ceil(1 / (1.25 * opts.hint_s * df)));
    const b = Math.min(kHi, Math.floor(1.25 / (opts.hint_s * df)));
    const r = strongestPeak(power, a, b);
    if (r.k >= 0 && r.snr >= minSnr) { found = r.k; snr = r.snr; }
  }
  if (found < 0) {
    const r = strongestPeak(power, kLo, kHi);
    found = r.k; snr = r.snr;
  }
  if (found < 0 || !(snr >= minSnr)) {
    const f = fail('no-oscillation', tMid);
    f.snr = snr;
    return f;
  }
  const nfftF = Math.max(nextPow2(Math.ceil(pad * n)), nfft);
  const ratio = nfftF / nfft;
  const dfF = 1 / (nfftF * dt);
  // fine bins (found ± 1 coarse bin), widened if the maximum sits on an edge
  let lo = (found - 1) * ratio, hi = (found + 1) * ratio;
  const fine = new Map<number, number>();
  const pw = (k: number): number => {
    let v = fine.get(k);
    if (v === undefined) { v = dtftPower(x, k / nfftF); fine.set(k, v); }
    return v;
  };
  let kBest = lo;
  for (let guard = 0; guard < 8; guard++) {
    kBest = lo;
    for (let k = lo; k <= hi; k++) if (pw(k) > pw(kBest)) kBest = k;
    if (kBest === lo && lo > 1) { lo -= ratio; continue; }
    if (kBest === hi && hi < nfftF / 2 - 1) { hi += ratio; continue; }
    break;
  }
  const l0 = Math.log(pw(kBest - 1)), l1 = Math.log(pw(kBest)), l2 = Math.log(pw(kBest + 1));
  const den = l0 - 2 * l1 + l2;
  let delta = den < 0 ? (0.5 * (l0 - l2)) / den : 0;
  if (!Number.isFinite(delta) || Math.abs(delta) > 0.5) delta = 0;
  const freq = (kBest + delta) * dfF;

  // amplitude, phase and level: linear least squares of [1, t, cos, sin]
  const lin = linearSineFit(t, y, mask, tMid, freq);
  if (!lin) return fail('no-oscillation', tMid);
  return {
    ok: true, period_s: 1 / freq, frequency_Hz: freq,
    amplitude: Math.hypot(lin[2], lin[3]),
    phase_rad: Math.atan2(-lin[3], lin[2]),
    equilibrium: lin[0], drift_per_s: lin[1], snr, tMid,
  };
}

/** strongest local maximum of `p` over k in [a, b] and its ratio to the band's median */
function strongestPeak(p: Float64Array, a: number, b: number): { k: number; snr: number } {
  if (b < a || a < 1) return { k: -1, snr: 0 };
  let best = -1, bestP = -Infinity;
  for (let k = a; k <= b; k++) {
    const v = p[k];
    if (v > bestP && v >= p[k - 1] && v >= p[k + 1]) { bestP = v; best = k; }
  }
  if (best < 0) return { k: -1, snr: 0 };
  const med = quickSelect(p.slice(a, b + 1), (b - a + 1) >> 1);
  return { k: best, snr: med > 0 ? bestP / med : Infinity };
}

/** |Σ x_i·e^(−i2π·f·i)|² at a normalised frequency f (cycles per sample), by a rotating phasor */
function dtftPower(x: Float64Array, f: number): number {
  const th = -2 * Math.PI * f;
  const cr = Math.cos(th), ci = Math.sin(th);
  let pr = 1, pi = 0, sr = 0, si = 0;
  for (let i = 0; i < x.length; i++) {
    const v = x[i];
    sr += v * pr; si += v * pi;
    const nr = pr * cr - pi * ci;
    pi = pr * ci + pi * cr;
    pr = nr;
    if ((i & 255) === 255) { pr = Math.cos(th * (i + 1)); pi = Math.sin(th * (i + 1)); }
  }
  return sr * sr + si * si;
}

/** k-th smallest value (0-based) of `a`, reordering `a` (Hoare's selection) */
function quickSelect(a: Float64Array, k: number): number {
  let lo = 0, hi = a.length - 1;
  while (hi > lo) {
    const pivot = a[(lo + hi) >> 1];
    let i = lo, j = hi;
    while (i <= j) {
      while (a[i] < pivot) i++;
      while (a[j] > pivot) j--;
      if (i <= j) { const tmp = a[i]; a[i] = a[j]; a[j] = tmp; i++; j--; }
    }
    if (k <= j) hi = j; else if (k >= i) lo = i; else return a[k];
  }
  return a[k];
}

/**
 * Linear least squares of y ≈ c0 + c1·(t − tMid) + a·cos(ωτ) + b·sin(ωτ),
 * τ = t − tMid, at a fixed frequency; returns [c0, c1, a, b] or null if singular.
 */
export function linearSineFit(
  t: Float64Array, y: Float64Array, mask: Uint8Array | undefined, tMid: number, freq: number,
): number[] | null {
  const w = 2 * Math.PI * freq;
  const ata = new Float64Array(16);
  const atb = new Float64Array(4);
  const row = new Float64Array(4);
  // cos/sin by rotation while the spacing repeats (uniform grid), else directly
  const h = t.length > 1 ? t[1] - t[0] : 0;
  const ch = Math.cos(w * h), sh = Math.sin(w * h);
  let c = 1, s = 0, prev = NaN, run = 0;
  for (let i = 0; i < t.length; i++) {
    if (mask && mask[i]) continue;
    const u = t[i] - tMid;
    if (run > 0 && run < 64 && Math.abs(t[i] - prev - h) <= 1e-12 * Math.abs(h) * 64) {
      const nc = c * ch - s * sh; s = s * ch + c * sh; c = nc; run++;
    } else {
      c = Math.cos(w * u); s = Math.sin(w * u); run = 1;
    }
    prev = t[i];
    row[0] = 1; row[1] = u; row[2] = c; row[3] = s;
    for (let j = 0; j < 4; j++) {
      atb[j] += row[j] * y[i];
      for (let k = 0; k <= j; k++) ata[j * 4 + k] += row[j] * row[k];
    }
  }
  for (let j = 0; j < 4; j++) for (let k = j + 1; k < 4; k++) ata[j * 4 + k] = ata[k * 4 + j];
  const x = spdSolve(ata, 4, atb);
  return x && x.every(Number.isFinite) ? Array.from(x) : null;
}
