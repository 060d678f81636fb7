/**
 * The spectrum of what the windows' fits leave of the angle: stored samples,
 * block by block in time order, minus the fitted free oscillation
 * (swing-model.ts), into Welch's estimate (welch-psd.ts). The equilibrium and
 * its wander stay in.
 *
 * A missing stretch of at most `maxHole` sample intervals (lost lines, masked
 * samples) is filled by a straight line between its neighbours, as the
 * pipeline's hole filler keeps the grid uniform; a longer one, a gap, or a
 * break in the swing model ends the stretch, so no segment straddles it. Times
 * are taken as on the grid of the median interval: the jitter of a host clock
 * is ignored, as a Welch estimate needs uniform samples.
 */
import { FLAG_INVALID, FLAG_SATURATED } from '../domain/block.js';
import type { SwingModel } from './swing-model.js';
import { WelchPsd, type WelchResult } from './welch-psd.js';

/** Options of ResidualSpectrum. */
export interface ResidualSpectrumOptions {
  /** sample interval, s */
  dt_s: number;
  /** Welch segment, samples (a power of two) */
  segment: number;
  /** longest hole filled, in sample intervals (default 5, as a gap is defined in docs/analysis.md) */
  maxHole?: number;
}

/** Counts of what went into the spectrum. */
export interface ResidualStats {
  /** samples used, filled ones included */
  used: number;
  /** samples filled across holes */
  filled: number;
  /** samples left out: bad flags, no swing model, or out of order */
  dropped: number;
  /** stretches begun (gaps and breaks + 1) */
  stretches: number;
}

/** Streams stored angle samples into the Welch estimate of their residual after the swing. */
export class ResidualSpectrum {
  readonly stats: ResidualStats = { used: 0, filled: 0, dropped: 0, stretches: 0 };
  private readonly welch: WelchPsd;
  private readonly dt: number;
  private readonly maxHole: number;
  private lastT = NaN; // time of the last sample used
  private lastR = NaN; // its residual
  private lastChain = -1;
  private model: Float64Array = new Float64Array(0);
  private chain: Int32Array = new Int32Array(0);
  private out: Float64Array = new Float64Array(0);

  constructor(private readonly swing: SwingModel, opts: ResidualSpectrumOptions) {
    this.dt = opts.dt_s;
    this.maxHole = opts.maxHole ?? 5;
    this.welch = new WelchPsd({ segment: opts.segment, dt_s: opts.dt_s, detrend: 'linear' });
  }

  /** Feed the next block of stored samples (angle in rad, flags as stored). */
  push(t: ArrayLike<number>, v: ArrayLike<number>, flags: ArrayLike<number>): void {
    const n = t.length;
    if (this.model.length < n) {
      this.model = new Float64Array(n);
      this.chain = new Int32Array(n);
      this.out = new Float64Array(n * (this.maxHole + 1));
    }
    this.swing.evaluate(t, n, this.model, this.chain);
    const out = this.out;
    let m = 0; // residuals collected for the current stretch
    for (let i = 0; i < n; i++) {
      const c = this.chain[i];
      const r = v[i] - this.model[i];
      if (c < 0 || (flags[i] & (FLAG_SATURATED | FLAG_INVALID)) !== 0 || !Number.isFinite(r) || !(t[i] > this.lastT + 0.5 * this.dt || this.lastChain < 0)) {
        this.stats.dropped++;
        continue;
      }
      if (this.lastChain >= 0) {
        const missing = Math.round((t[i] - this.lastT) / this.dt) - 1;
        if (c !== this.lastChain || missing > this.maxHole) {
          this.welch.push(out, 0, m);
          m = 0;
          this.welch.breakStretch();
          this.stats.stretches++;
        } else {
          for (let j = 1; j <= missing; j++) out[m++] = this.lastR + ((r - this.lastR) * j) / (missing + 1);
          if (missing > 0) {
            this.stats.filled += missing;
            this.stats.used += missing;
          }
        }
      } else {
        this.stats.stretches++;
      }
      out[m++] = r;
      this.stats.used++;
      this.lastT = t[i];
      this.lastR = r;
      this.lastChain = c;
    }
    this.welch.push(out, 0, m);
  }

  /** The averaged spectrum (null when no full segment fitted into a stretch). */
  result(): WelchResult | null {
    return this.welch.result();
  }
}
