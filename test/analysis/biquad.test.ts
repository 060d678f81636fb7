import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import { rng } from '../helpers/blocks.js';
import {
  BIQUAD_STRIDE, BiquadCascade, biquadGroupDelayDc, biquadResponse, biquadSupport, butterworthLowpass,
} from '../../src/analysis/biquad.js';

/** Gain of a packed biquad cascade at DC: Π (b0 + b1 + b2)/(1 + a1 + a2). */
function biquadDcGain(sections: Float64Array): number {
  let g = 1;
  for (let o = 0; o < sections.length; o += BIQUAD_STRIDE) g *= (sections[o] + sections[o + 1] + sections[o + 2]) / (1 + sections[o + 3] + sections[o + 4]);
  return g;
}

// fili (npm, MIT) ships no types: load it through require so it is typed `any`.
const require = createRequire(import.meta.url);
// eslint-disable-next-line @typescript-eslint/no-explicit-any
const Fili: any = require('fili');


/**
 * Magnitude of an order-n digital Butterworth low-pass designed by the
 * bilinear transform with pre-warping: |H(e^jω)| = 1/√(1 + (tan(ω/2)/tan(ωc/2))^(2n)).
 * Textbook result (e.g. Oppenheim & Schafer, Discrete-Time Signal Processing, §7.1; from memory).
 */
function analyticMagnitude(order: number, fc: number, f: number, fs: number): number {
  const r = Math.tan((Math.PI * f) / fs) / Math.tan((Math.PI * fc) / fs);
  return 1 / Math.sqrt(1 + r ** (2 * order));
}

describe('butterworthLowpass', () => {
  it('matches the analytic Butterworth magnitude at chosen frequencies', () => {
    const fs = 100;
    for (const order of [2, 4, 8, 12]) {
      for (const fc of [0.5, 5, 20, 45]) {
        const s = butterworthLowpass(order, fc, fs);
        expect(s.length).toBe((order / 2) * BIQUAD_STRIDE);
        for (const f of [0, 0.01, 0.25 * fc, 0.5 * fc, fc, 1.5 * fc, Math.min(3 * fc, 49.9), 49.9]) {
          const want = analyticMagnitude(order, fc, f, fs);
          expect(Math.abs(biquadResponse(s, f, fs).magnitude - want)).toBeLessThan(1e-11 + 1e-9 * want);
        }
        // −3 dB at the cutoff, exactly by construction of the pre-warp
        expect(biquadResponse(s, fc, fs).magnitude).toBeCloseTo(Math.SQRT1_2, 12);
        expect(Math.abs(biquadDcGain(s) - 1)).toBeLessThan(1e-10);
      }
    }
  });

  it('gives the coefficients of the RBJ Audio EQ Cookbook low-pass as computed by fili', () => {
    // R. Bristow-Johnson, "Cookbook formulae for audio EQ biquad filter coefficients":
    // LPF b = (1−cos w0)/2·[1, 2, 1], a = [1+α, −2cos w0, 1−α], α = sin w0/(2Q);
    // fili's CalcCascades().lowpass implements it with the Butterworth Q of each section.
    for (const [order, fc, fs] of [[2, 0.1, 1], [4, 3, 50], [8, 1.25, 100], [6, 0.02, 1]] as const) {
      const ours = butterworthLowpass(order, fc, fs);
      const ref = new Fili.CalcCascades().lowpass({ order: order / 2, characteristic: 'butterworth', Fs: fs, Fc: fc });
      expect(ref.length).toBe(order / 2);
      for (let k = 0; k < order / 2; k++) {
        const o = k * BIQUAD_STRIDE;
        const r = ref[k];
        const got = [ours[o], ours[o + 1], ours[o + 2], ours[o + 3], ours[o + 4]];
        const want = [r.k * r.b[0], r.k * r.b[1], r.k * r.b[2], r.a[0], r.a[1]];
        for (let j = 0; j < 5; j++) expect(Math.abs(got[j] - want[j])).toBeLessThan(1e-13);
      }
    }
  });

  it('rejects a bad design with the field named', () => {
    expect(() => butterworthLowpass(3, 1, 10)).toThrow(/order/);
    expect(() => butterworthLowpass(4, 5, 10)).toThrow(/cutoff_Hz/);
    expect(() => butterworthLowpass(4, 1, -1)).toThrow(/sampleRate_Hz/);
  });
});

describe('BiquadCascade', () => {
  it('filters like fili\'s IirFilter, and block boundaries do not change the output', () => {
    const s = butterworthLowpass(8, 2, 100);
    const r = rng(7);
    const x = new Float64Array(3000).map(() => r() - 0.5);
    const ref = new Fili.IirFilter(new Fili.CalcCascades().lowpass({ order: 4, characteristic: 'butterworth', Fs: 100, Fc: 2 })).multiStep(Array.from(x));
    const whole = new Float64Array(x.length);
    new BiquadCascade(s).process(x, whole);
    for (let i = 0; i < x.length; i++) expect(Math.abs(whole[i] - ref[i])).toBeLessThan(1e-12);
    for (let trial = 0; trial < 5; trial++) {
      const f = new BiquadCascade(s);
      const y = new Float64Array(x.length);
      let i = 0;
      while (i < x.length) {
        const n = 1 + Math.floor(r() * 300);
        f.process(x, y, i, Math.min(x.length, i + n));
        i += n;
      }
      expect(y).toEqual(whole);
    }
  });

  it('settle() starts on a level without a transient; reset() zeroes', () => {
    const f = new BiquadCascade(butterworthLowpass(8, 1, 100));
    f.settle(2.5);
    for (let i = 0; i < 500; i++) expect(Math.abs(f.step(2.5) - 2.5)).toBeLessThan(1e-12);
    f.reset();
    expect(f.step(0)).toBe(0);
  });
});

describe('group delay and support', () => {
  it('DC group delay equals −dφ/dω from fili\'s response at low frequency', () => {
    const fs = 1;
    for (const [order, fc] of [[2, 0.1], [8, 0.02], [8, 0.005]] as const) {
      const s = butterworthLowpass(order, fc, fs);
      const flt = new Fili.IirFilter(new Fili.CalcCascades().lowpass({ order: order / 2, characteristic: 'butterworth', Fs: fs, Fc: fc }));
      const df = fc * 1e-4;
      const p1 = flt.responsePoint({ Fs: fs, Fr: df }).phase;
      const p2 = flt.responsePoint({ Fs: fs, Fr: 2 * df }).phase;
      const numeric = -(p2 - p1) / (2 * Math.PI * df);
      expect(biquadGroupDelayDc(s)).toBeCloseTo(numeric, 3);
      // analog Butterworth: τ(0) = Σ 1/(Q_k ωc') with ωc' = 2 fs tan(π fc/fs); close for fc ≪ fs (common practice, no source)
      let analog = 0;
      const wc = 2 * fs * Math.tan((Math.PI * fc) / fs);
      for (let k = 0; k < order / 2; k++) analog += 2 * Math.sin(((2 * k + 1) * Math.PI) / (2 * order)) / wc;
      expect(Math.abs(biquadGroupDelayDc(s) - analog) / analog).toBeLessThan(0.05);
    }
  });

  it('support holds all but the tail fraction of the impulse response', () => {
    const s = butterworthLowpass(8, 0.02, 1);
    const L = biquadSupport(s, 1e-4);
    const f = new BiquadCascade(s);
    const h = new Float64Array(20 * L).map((_, i) => f.step(i === 0 ? 1 : 0));
    let total = 0;
    let tail = 0;
    for (let i = 0; i < h.length; i++) {
      total += Math.abs(h[i]);
      if (i >= L) tail += Math.abs(h[i]);
    }
    expect(tail / total).toBeLessThanOrEqual(1e-4);
    const tail1 = tail + Math.abs(h[L - 1]);
    expect(tail1 / total).toBeGreaterThan(1e-4);
  });
});
