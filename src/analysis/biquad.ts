/**
 * Biquad (second-order IIR) sections in direct form II transposed, and the
 * design of an even-order Butterworth low-pass as a cascade of them by the
 * bilinear transform with pre-warping.
 *
 * Sections are packed in one Float64Array, five numbers each, normalised so
 * a0 = 1: [b0, b1, b2, a1, a2, b0, b1, …]. Transfer function of one section:
 * H(z) = (b0 + b1 z⁻¹ + b2 z⁻²) / (1 + a1 z⁻¹ + a2 z⁻²).
 *
 * Delay: the filter is causal, not zero-phase. A constant delay does not
 * change a fitted period or equilibrium; it shifts the fitted phase and times,
 * and the amplitude of a tone at f0 is scaled by |H(f0)|. The decimator
 * (decimate.ts) corrects its output time stamps by the group delay at DC and
 * places the cutoff so that |H(f0)| = 1 within 1e-4 for the swing frequency.
 */

/** Number of coefficients per packed section. */
export const BIQUAD_STRIDE = 5;

/**
 * Butterworth low-pass of even `order` (2, 4, 6, …) as order/2 biquads: the
 * analog prototype's pole pairs, pre-warped to the cutoff, bilinear transform.
 * `cutoff_Hz` is the −3 dB frequency; it must lie in (0, sampleRate_Hz/2).
 */
export function butterworthLowpass(order: number, cutoff_Hz: number, sampleRate_Hz: number): Float64Array {
  if (!Number.isInteger(order) || order < 2 || order % 2 !== 0) throw new RangeError(`order: must be an even integer ≥ 2 (got ${order})`);
  if (!(sampleRate_Hz > 0) || !Number.isFinite(sampleRate_Hz)) throw new RangeError(`sampleRate_Hz: must be > 0 (got ${sampleRate_Hz})`);
  if (!(cutoff_Hz > 0) || !(cutoff_Hz < sampleRate_Hz / 2)) throw new RangeError(`cutoff_Hz: must be in (0, ${sampleRate_Hz / 2}) (got ${cutoff_Hz})`);
  const sections = order / 2;
  const out = new Float64Array(sections * BIQUAD_STRIDE);
  // Pre-warping: the analog cutoff tan(ωc/2) maps exactly onto ωc after the transform.
  const K = Math.tan((Math.PI * cutoff_Hz) / sampleRate_Hz);
  const K2 = K * K;
  for (let k = 0; k < sections; k++) {
    // Butterworth pole pair k of an order-n prototype: s² + s/Q + 1 with Q = 1/(2 sin((2k+1)π/(2n))).
    const q = 1 / (2 * Math.sin(((2 * k + 1) * Math.PI) / (2 * order)));
    const norm = 1 / (1 + K / q + K2);
    const b0 = K2 * norm;
    const o = k * BIQUAD_STRIDE;
    out[o] = b0;
    out[o + 1] = 2 * b0;
    out[o + 2] = b0;
    out[o + 3] = 2 * (K2 - 1) * norm;
    out[o + 4] = (1 - K / q + K2) * norm;
  }
  return out;
}

/** Complex response of the cascade at `f_Hz`: magnitude and phase (radians, unwrapped per section sum). */
export function biquadResponse(sections: Float64Array, f_Hz: number, sampleRate_Hz: number): { magnitude: number; phase_rad: number } {
  const w = (2 * Math.PI * f_Hz) / sampleRate_Hz;
  const c1 = Math.cos(w), s1 = -Math.sin(w); // z⁻¹
  const c2 = Math.cos(2 * w), s2 = -Math.sin(2 * w); // z⁻²
  let mag = 1;
  let phase = 0;
  for (let o = 0; o < sections.length; o += BIQUAD_STRIDE) {
    const nr = sections[o] + sections[o + 1] * c1 + sections[o + 2] * c2;
    const ni = sections[o + 1] * s1 + sections[o + 2] * s2;
    const dr = 1 + sections[o + 3] * c1 + sections[o + 4] * c2;
    const di = sections[o + 3] * s1 + sections[o + 4] * s2;
    mag *= Math.hypot(nr, ni) / Math.hypot(dr, di);
    phase += Math.atan2(ni, nr) - Math.atan2(di, dr);
  }
  return { magnitude: mag, phase_rad: phase };
}

/**
 * Group delay of the cascade at DC, in samples: Σ over sections of
 * Σk·b_k/Σb_k − Σk·a_k/Σa_k (the derivative of the phase of a polynomial in z⁻¹ at ω = 0).
 */
export function biquadGroupDelayDc(sections: Float64Array): number {
  let d = 0;
  for (let o = 0; o < sections.length; o += BIQUAD_STRIDE) {
    const b0 = sections[o], b1 = sections[o + 1], b2 = sections[o + 2];
    const a1 = sections[o + 3], a2 = sections[o + 4];
    d += (b1 + 2 * b2) / (b0 + b1 + b2) - (a1 + 2 * a2) / (1 + a1 + a2);
  }
  return d;
}

/**
 * Length L of the impulse response that holds all but `tailFraction` of its
 * L1 norm: an input sample affects later outputs by less than that fraction
 * beyond L samples. Used to decide how far a bad input sample taints outputs.
 */
export function biquadSupport(sections: Float64Array, tailFraction = 1e-4, maxSamples = 1 << 20): number {
  const f = new BiquadCascade(sections);
  const h = new Float64Array(Math.min(maxSamples, 1 << 12));
  let buf = h;
  let n = 0;
  let total = 0;
  let quiet = 0;
  // Run the impulse until the response has stayed negligible for a while.
  for (; n < maxSamples; n++) {
    if (n === buf.length) {
      const g = new Float64Array(buf.length * 2);
      g.set(buf);
      buf = g;
    }
    const v = f.step(n === 0 ? 1 : 0);
    buf[n] = v;
    total += Math.abs(v);
    quiet = Math.abs(v) < 1e-7 * tailFraction * total ? quiet + 1 : 0;
    if (quiet > 256) break;
  }
  let tail = 0;
  for (let m = n; m > 0; m--) {
    tail += Math.abs(buf[m - 1]);
    if (tail > tailFraction * total) return m;
  }
  return 1;
}

/** A streaming cascade of biquads: its state carries across calls, so block boundaries do not matter. */
export class BiquadCascade {
  readonly sections: Float64Array;
  /** two state registers per section (direct form II transposed) */
  private readonly s: Float64Array;

  constructor(sections: Float64Array) {
    if (sections.length === 0 || sections.length % BIQUAD_STRIDE !== 0) throw new RangeError(`sections: length must be a positive multiple of ${BIQUAD_STRIDE}`);
    this.sections = sections;
    this.s = new Float64Array((sections.length / BIQUAD_STRIDE) * 2);
  }

  /** Filter one sample. */
  step(x: number): number {
    const c = this.sections;
    const s = this.s;
    let v = x;
    for (let o = 0, j = 0; o < c.length; o += BIQUAD_STRIDE, j += 2) {
      const y = c[o] * v + s[j];
      s[j] = c[o + 1] * v - c[o + 3] * y + s[j + 1];
      s[j + 1] = c[o + 2] * v - c[o + 4] * y;
      v = y;
    }
    return v;
  }

  /** Filter x[from..to) into y[from..to) (y may be x). */
  process(x: Float64Array, y: Float64Array, from = 0, to = x.length): void {
    // section by section over the whole range: the same arithmetic as `step`, in a tighter loop
    const c = this.sections;
    const st = this.s;
    for (let o = 0, j = 0; o < c.length; o += BIQUAD_STRIDE, j += 2) {
      const b0 = c[o], b1 = c[o + 1], b2 = c[o + 2], a1 = c[o + 3], a2 = c[o + 4];
      let s1 = st[j];
      let s2 = st[j + 1];
      const src = o === 0 ? x : y;
      for (let i = from; i < to; i++) {
        const v = src[i];
        const out = b0 * v + s1;
        s1 = b1 * v - a1 * out + s2;
        s2 = b2 * v - a2 * out;
        y[i] = out;
      }
      st[j] = s1;
      st[j + 1] = s2;
    }
  }

  /** Zero the state (as if the input had always been 0). */
  reset(): void {
    this.s.fill(0);
  }

  /** Set the state to the steady state of a constant input x0, so a restart on a level causes no step transient. */
  settle(x0: number): void {
    const c = this.sections;
    const s = this.s;
    let v = x0;
    for (let o = 0, j = 0; o < c.length; o += BIQUAD_STRIDE, j += 2) {
      const y = (v * (c[o] + c[o + 1] + c[o + 2])) / (1 + c[o + 3] + c[o + 4]);
      s[j + 1] = c[o + 2] * v - c[o + 4] * y;
      s[j] = c[o + 1] * v - c[o + 3] * y + s[j + 1];
      v = y;
    }
  }
}
