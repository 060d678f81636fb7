/**
 * Streaming decimation: an anti-alias Butterworth low-pass, then every M-th
 * sample kept. State carries across calls, so the output does not depend on
 * how the input was cut into blocks.
 *
 * Choice of M: `chooseDecimationFactor` from the station's
 * `analysis.samples_per_period` and the first period estimate. M is fixed for
 * the whole run once chosen: changing it would change the filter, its delay
 * and the noise of every later window, and windows would not be comparable.
 *
 * Cutoff: `cutoffFraction` of the output Nyquist frequency (default 0.4, order
 * 8). A swing sampled at `samples_per_period` s after decimation sits at
 * f0/fc = 5/s of the cutoff; |H(f0)| = 1/√(1+(f0/fc)^16) is 1 within 1e-4 for
 * s ≥ 9, so amplitude_rad needs no correction then. For a coarser choice
 * divide the fitted amplitude by `passbandGain(f0)`.
 *
 * Delay: output time stamps are the kept input times minus the group delay at
 * DC, so equilibrium and phase line up with the input; the period is not
 * changed by any constant delay. The phase delay at f0 differs from the DC
 * group delay by a term of order (f0/fc)²: with the defaults and 20 samples
 * per period the fitted phase is off by about 10 mrad. Pass `delayAt_Hz` = f0
 * to remove the phase delay at the swing frequency instead (exact at f0).
 *
 * Flags of an output sample: it carries FLAG_SATURATED or FLAG_INVALID when
 * an input sample among the last L that fed it was saturated or part of an
 * invalid stretch (≥ 3 in a row), L being the impulse response length holding
 * all but 1e-4 of its L1 norm (`support`). Bad input samples are replaced by
 * the last good value before filtering, so they cannot poison the state; for
 * an isolated bad sample (a despiked spike, one lost line) that hold differs
 * from the truth by about one sample's worth of swing, which the filter spreads
 * at a level far below the noise, so it flags only the next kept output
 * (FLAG_SPIKE or FLAG_INVALID) instead of L inputs' worth: the despiker's rare
 * false alarms would otherwise mask a period's worth of good samples each. After
 * FLAG_AFTER_GAP the filter restarts: its state settles on the first good
 * value, the kept-sample phase restarts so the sample after the gap is kept
 * (and carries FLAG_AFTER_GAP), and outputs within L input samples of the
 * restart are FLAG_INVALID while the filter settles.
 */
import { FLAG_AFTER_GAP, FLAG_INVALID, FLAG_SATURATED, FLAG_SPIKE } from '../domain/block.js';
import { BiquadCascade, biquadGroupDelayDc, biquadResponse, biquadSupport, butterworthLowpass } from './biquad.js';

/** Options of the decimator. */
export interface DecimatorOptions {
  /** keep every `factor`-th sample (integer ≥ 1; 1 = pass through unfiltered) */
  factor: number;
  /** input sample interval, seconds */
  sampleInterval_s: number;
  /** Butterworth order, even (default 8) */
  order?: number;
  /** cutoff as a fraction of the output Nyquist frequency, in (0, 1) (default 0.4) */
  cutoffFraction?: number;
  /** impulse-response tail fraction that sets the flag support L (default 1e-4) */
  tailFraction?: number;
  /** frequency whose phase delay is taken out of the output times, Hz (default 0: the DC group delay); give the swing frequency to align the fitted phase exactly */
  delayAt_Hz?: number;
}

/** What one call of `Decimator.process` returns; arrays are fresh copies. */
export interface DecimatedSamples {
  n: number;
  /** output times, seconds (input time minus the DC group delay) */
  t: Float64Array;
  /** filtered values */
  y: Float64Array;
  flags: Uint8Array;
  /** index of each kept sample within the input range passed in (for sub-sampling other channels) */
  index: Int32Array;
}

/** Median of the positive, finite intervals of t[from..to); undefined when there are none. */
export function medianInterval(t: Float64Array, from = 0, to = t.length): number | undefined {
  const d: number[] = [];
  for (let i = from + 1; i < to; i++) {
    const v = t[i] - t[i - 1];
    if (v > 0 && Number.isFinite(v)) d.push(v);
  }
  if (d.length === 0) return undefined;
  d.sort((a, b) => a - b);
  const h = d.length >> 1;
  return d.length & 1 ? d[h] : 0.5 * (d[h - 1] + d[h]);
}

/** Decimation factor that leaves about `samplesPerPeriod` samples per period (at least 1). */
export function chooseDecimationFactor(period_s: number, sampleInterval_s: number, samplesPerPeriod: number): number {
  if (!(period_s > 0) || !(sampleInterval_s > 0) || !(samplesPerPeriod > 0)) throw new RangeError('chooseDecimationFactor: period_s, sampleInterval_s and samplesPerPeriod must be > 0');
  return Math.max(1, Math.floor(period_s / (samplesPerPeriod * sampleInterval_s)));
}

const BAD = FLAG_SATURATED | FLAG_SPIKE | FLAG_INVALID;

/** Streaming low-pass + keep-every-M-th with flag propagation and restart after gaps. */
export class Decimator {
  readonly factor: number;
  readonly sampleInterval_s: number;
  /** the anti-alias filter (empty for factor 1) */
  readonly sections: Float64Array;
  /** delay subtracted from output times, seconds: DC group delay, or phase delay at `delayAt_Hz` */
  readonly groupDelay_s: number;
  /** input samples over which a bad sample taints outputs */
  readonly support: number;
  private readonly filter: BiquadCascade | null;
  private seg = 0; // samples since the segment (re)start
  private started = false; // a good sample has set the state
  private lastGood = NaN;
  private lastSat = -Infinity;
  private lastSpike = -Infinity;
  private lastInvalid = -Infinity;
  private lastShortInvalid = -Infinity;
  private invalidRun = 0;
  private settleUntil = 0;
  private gapPending = false;

  constructor(opts: DecimatorOptions) {
    const M = opts.factor;
    if (!Number.isInteger(M) || M < 1) throw new RangeError(`factor: must be an integer ≥ 1 (got ${M})`);
    if (!(opts.sampleInterval_s > 0) || !Number.isFinite(opts.sampleInterval_s)) throw new RangeError(`sampleInterval_s: must be > 0 (got ${opts.sampleInterval_s})`);
    const order = opts.order ?? 8;
    const frac = opts.cutoffFraction ?? 0.4;
    if (!(frac > 0 && frac < 1)) throw new RangeError(`cutoffFraction: must be in (0, 1) (got ${frac})`);
    this.factor = M;
    this.sampleInterval_s = opts.sampleInterval_s;
    if (M === 1) {
      this.sections = new Float64Array(0);
      this.filter = null;
      this.groupDelay_s = 0;
      this.support = 1;
    } else {
      const fs = 1 / opts.sampleInterval_s;
      this.sections = butterworthLowpass(order, (frac * fs) / (2 * M), fs);
      this.filter = new BiquadCascade(this.sections);
      const fd = opts.delayAt_Hz ?? 0;
      if (!(fd >= 0 && fd < fs / (2 * M))) throw new RangeError(`delayAt_Hz: must be in [0, ${fs / (2 * M)}) (got ${fd})`);
      this.groupDelay_s = fd > 0
        ? -biquadResponse(this.sections, fd, fs).phase_rad / (2 * Math.PI * fd)
        : biquadGroupDelayDc(this.sections) * opts.sampleInterval_s;
      this.support = biquadSupport(this.sections, opts.tailFraction ?? 1e-4);
    }
  }

  /**
   * By how much a fit on the decimated samples underestimates its standard
   * errors when the input noise is white, and so the factor to scale them by.
   * The fit takes its residuals for white noise spread over the whole output
   * band (0 … fs/(2M)); after the low-pass they only fill the filter's band,
   * so the noise density at the swing (in the passband) is higher than the
   * fit assumes. Per output sample the filter keeps σ²·Σh² of white input
   * noise σ²; the density at the swing is σ²·2/fs_in against the assumed
   * σ²·Σh²·2M/fs_in, so variances are low by 1/(M·Σh²) (≈ 1/cutoffFraction
   * for a sharp filter). 1 for factor 1.
   */
  whiteNoiseSigmaFactor(): number {
    if (!this.filter) return 1;
    const f = new BiquadCascade(this.sections);
    let e = 0;
    for (let n = 0; n < this.support * 4 + 64; n++) {
      const h = f.step(n === 0 ? 1 : 0);
      e += h * h;
    }
    return Math.sqrt(1 / (this.factor * e));
  }

  /** |H(f)| of the anti-alias filter at f_Hz (1 for factor 1). */
  passbandGain(f_Hz: number): number {
    return this.filter ? biquadResponse(this.sections, f_Hz, 1 / this.sampleInterval_s).magnitude : 1;
  }

  /** Forget all state, as at the start of a run. */
  reset(): void {
    this.filter?.reset();
    this.started = false;
    this.seg = 0;
    this.lastGood = NaN;
    this.lastSat = this.lastSpike = this.lastInvalid = this.lastShortInvalid = -Infinity;
    this.invalidRun = 0;
    this.settleUntil = 0;
    this.gapPending = false;
  }

  /** Filter and decimate samples [from, to) of one block. */
  process(t: Float64Array, y: Float64Array, flags: Uint8Array, from = 0, to = t.length): DecimatedSamples {
    const M = this.factor;
    const cap = Math.ceil((to - from) / M) + 1;
    const ot = new Float64Array(cap);
    const oy = new Float64Array(cap);
    const of = new Uint8Array(cap);
    const oi = new Int32Array(cap);
    let n = 0;
    const L = this.support;
    const gd = this.groupDelay_s;
    const filt = this.filter;
    const len = to - from;
    // pass 1, per sample: the filter input (bad samples held), restarts, and the flags of kept samples
    const xin = filt ? this.scratch(len) : y;
    const events: number[] = []; // pairs (relative index, 0 = reset | 1 = settle)
    const startedAtEntry = this.started;
    for (let i = from; i < to; i++) {
      const f = flags[i];
      if (f & FLAG_AFTER_GAP) {
        // restart: nothing before the gap may leak into what follows
        events.push(i - from, 0);
        this.seg = 0;
        this.started = false;
        this.lastSat = this.lastSpike = this.lastInvalid = this.lastShortInvalid = -Infinity;
        this.invalidRun = 0;
        this.gapPending = true;
      }
      const s = this.seg;
      let x = y[i];
      const bad = (f & BAD) !== 0 || !Number.isFinite(x);
      if (bad) {
        if (f & FLAG_SATURATED) this.lastSat = s;
        if (f & FLAG_SPIKE) this.lastSpike = s;
        if (f & FLAG_INVALID || !Number.isFinite(x)) {
          this.invalidRun++;
          this.lastShortInvalid = s;
          if (this.invalidRun >= 3) this.lastInvalid = s; // a stretch, not an isolated sample
        } else this.invalidRun = 0;
        x = this.lastGood; // hold: keeps the state finite and close
      } else {
        this.invalidRun = 0;
        this.lastGood = x;
        if (!this.started) {
          this.started = true;
          events.push(i - from, 1);
          this.settleUntil = filt ? s + L : s;
        }
      }
      if (filt) xin[i - from] = x;
      if (s % M === 0) {
        let of_ = 0;
        if (s - this.lastSat < L) of_ |= FLAG_SATURATED;
        if (s - this.lastSpike < M) of_ |= FLAG_SPIKE;
        if (s - this.lastInvalid < L || s - this.lastShortInvalid < M || (filt && (!this.started || s < this.settleUntil))) of_ |= FLAG_INVALID;
        if (this.gapPending) {
          of_ |= FLAG_AFTER_GAP;
          this.gapPending = false;
        }
        ot[n] = t[i] - gd;
        of[n] = of_;
        oi[n] = i - from;
        n++;
      }
      this.seg = s + 1;
    }
    if (!filt) {
      for (let k = 0; k < n; k++) oy[k] = y[from + oi[k]];
    } else {
      // pass 2: filter the runs between restarts, in place in the scratch array
      let started = startedAtEntry;
      let pos = 0;
      for (let e = 0; e <= events.length; e += 2) {
        const at = e < events.length ? events[e] : len;
        if (started) filt.process(xin, xin, pos, at);
        else xin.fill(NaN, pos, at);
        if (e === events.length) break;
        if (events[e + 1] === 0) {
          filt.reset();
          started = false;
        } else {
          filt.settle(xin[at]);
          started = true;
        }
        pos = at;
      }
      for (let k = 0; k < n; k++) oy[k] = xin[oi[k]];
    }
    return { n, t: ot.slice(0, n), y: oy.slice(0, n), flags: of.slice(0, n), index: oi.slice(0, n) };
  }

  private buf = new Float64Array(0);

  /** A reusable work array of at least n samples. */
  private scratch(n: number): Float64Array {
    if (this.buf.length < n) this.buf = new Float64Array(Math.max(n, 2 * this.buf.length));
    return this.buf;
  }
}
