/**
 * The free oscillation the windows fitted, as a function of time over a run:
 * A·e^(−(t − t_mid)/τ)·cos(2π(t − t_mid)/T + φ) of each ok window (docs/commands.md,
 * "The fitted model"), without its equilibrium and drift, so that subtracting
 * it from the angle leaves the equilibrium and the noise.
 *
 * Between the middles of two consecutive ok windows that both cover the
 * stretch between them, the two fits are blended linearly in time, so the
 * model has no step where one window hands over to the next (a step would add
 * a 1/f² floor to the spectrum of what is left). Where consecutive windows do
 * not overlap that far (a gap, a run of rejected windows), the model ends
 * with the first window's span and starts again with the next one's: that is
 * a break, and no spectral segment may straddle it. Samples outside every ok
 * window have no model.
 */
import type { WindowResult } from '../domain/window-result.js';

/**
 * What the model reads of a window (an ok one: the fitted fields are numbers). The decay is
 * the rate 1/τ where the store has it (it may be slightly negative), else 1/decay_time_s (null: none).
 */
export type SwingWindow = Pick<WindowResult, 't_start_s' | 't_mid_s' | 't_end_s' | 'amplitude_rad' | 'decay_time_s' | 'period_s' | 'phase_rad'> & { decay_rate_per_s?: number | null };

/** A window's amplitude decay rate 1/τ, 1/s: the stored rate, else 1/decay_time_s, else 0 (no decay resolved). */
export function decayRate(w: Pick<SwingWindow, 'decay_time_s' | 'decay_rate_per_s'>): number {
  if (typeof w.decay_rate_per_s === 'number' && Number.isFinite(w.decay_rate_per_s)) return w.decay_rate_per_s;
  return w.decay_time_s !== null && w.decay_time_s > 0 ? 1 / w.decay_time_s : 0;
}

/** The fitted oscillation over time, evaluated for samples in time order. */
export class SwingModel {
  // pieces: [start, end) with the window(s) that define the model there; chain = stretch id
  private readonly start: number[] = [];
  private readonly end: number[] = [];
  private readonly a: number[] = [];
  private readonly b: number[] = []; // −1: window a alone
  private readonly chainOf: number[] = [];
  private readonly w: { tm: number; A: number; rate: number; omega: number; phi: number }[];
  private cursor = 0;

  /** @param windows ok windows with finite fitted fields, in time order */
  constructor(windows: readonly SwingWindow[]) {
    // usable fits, their middles strictly increasing (the pieces below must not overlap)
    const ws: SwingWindow[] = [];
    for (const x of windows) {
      if (x.amplitude_rad === null || x.period_s === null || x.phase_rad === null || !(x.period_s > 0)) continue;
      if (ws.length && !(x.t_mid_s > ws[ws.length - 1].t_mid_s)) continue;
      ws.push(x);
    }
    this.w = ws.map((x) => ({
      tm: x.t_mid_s,
      A: x.amplitude_rad!,
      rate: decayRate(x),
      omega: (2 * Math.PI) / x.period_s!,
      phi: x.phase_rad!,
    }));
    let chain = 0;
    for (let i = 0; i < ws.length; i++) {
      const p = ws[i];
      const q = ws[i + 1];
      if (i === 0) this.piece(p.t_start_s, p.t_mid_s, 0, -1, chain);
      if (!q) {
        // the last window's own span, its end sample included
        this.piece(p.t_mid_s, p.t_end_s + 1e-9 * Math.max(1, Math.abs(p.t_end_s)), i, -1, chain);
        break;
      }
      if (q.t_mid_s > p.t_mid_s && q.t_start_s <= p.t_mid_s && q.t_mid_s <= p.t_end_s) {
        this.piece(p.t_mid_s, q.t_mid_s, i, i + 1, chain);
      } else {
        // a break: p to the end of its span (or to where q's span begins, if they overlap), then q from there
        const cut = Math.max(p.t_mid_s, Math.min(p.t_end_s, q.t_start_s > p.t_mid_s ? (p.t_end_s + q.t_start_s) / 2 : p.t_end_s));
        this.piece(p.t_mid_s, cut, i, -1, chain);
        chain++;
        this.piece(Math.max(cut, q.t_start_s), q.t_mid_s, i + 1, -1, chain);
      }
    }
  }

  /** The stretches the model covers without a break, [start, end) in s, in time order. */
  chainSpans(): { start_s: number; end_s: number }[] {
    const out: { start_s: number; end_s: number }[] = [];
    let last = -1;
    for (let k = 0; k < this.start.length; k++) {
      if (this.chainOf[k] === last) out[out.length - 1].end_s = this.end[k];
      else out.push({ start_s: this.start[k], end_s: this.end[k] });
      last = this.chainOf[k];
    }
    return out;
  }

  /** Number of ok windows the model is made of. */
  get windows(): number {
    return this.w.length;
  }

  /**
   * The model at the times t[0…n): the oscillation (rad) into `value` and the
   * stretch it belongs to into `chain`; NaN and −1 where no window covers the
   * time. Blocks must come in time order, times non-decreasing.
   */
  evaluate(t: ArrayLike<number>, n: number, value: Float64Array, chain: Int32Array): void {
    for (let i = 0; i < n; i++) {
      const ti = t[i];
      while (this.cursor < this.end.length && ti >= this.end[this.cursor]) this.cursor++;
      const k = this.cursor;
      if (k >= this.end.length || ti < this.start[k]) {
        value[i] = NaN;
        chain[i] = -1;
        continue;
      }
      chain[i] = this.chainOf[k];
      const va = this.osc(this.a[k], ti);
      if (this.b[k] < 0) {
        value[i] = va;
        continue;
      }
      const ta = this.w[this.a[k]].tm, tb = this.w[this.b[k]].tm;
      const u = (ti - ta) / (tb - ta);
      value[i] = (1 - u) * va + u * this.osc(this.b[k], ti);
    }
  }

  private osc(i: number, t: number): number {
    const w = this.w[i];
    const x = t - w.tm;
    return w.A * Math.exp(-w.rate * x) * Math.cos(w.omega * x + w.phi);
  }

  private piece(start: number, end: number, a: number, b: number, chain: number): void {
    if (!(end > start)) return;
    this.start.push(start);
    this.end.push(end);
    this.a.push(a);
    this.b.push(b);
    this.chainOf.push(chain);
  }
}
