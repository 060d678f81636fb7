/**
 * The phase-diffusion term of a window's uncertainty: the slope of a random
 * walk over a window (the formula's constant, against a direct simulation of
 * the walk) and the estimator of D from second differences of
 * non-overlapping windows.
 */
import { describe, expect, it } from 'vitest';
import { Matrix, solve } from 'ml-matrix';
import { DiffusionEstimator, extraVariance, thermalDiffusion, thermalResidualVariance } from '../../src/analysis/phase-diffusion.js';
import { normals } from '../helpers/blocks.js';

describe('phase diffusion', () => {
  it('var of the least-squares slope of a random walk over W is 6·D_φ/(5·W) (simulated walks)', () => {
    const n = normals(4);
    const N = 400, W = 240, dt = W / (N - 1), Dphi = 3e-6;
    const slopes: number[] = [];
    const tBar = W / 2;
    let sxx = 0;
    for (let i = 0; i < N; i++) sxx += (i * dt - tBar) ** 2;
    for (let r = 0; r < 4000; r++) {
      let phi = 0, sxy = 0;
      for (let i = 0; i < N; i++) {
        if (i > 0) phi += Math.sqrt(Dphi * dt) * n();
        sxy += (i * dt - tBar) * phi;
      }
      slopes.push(sxy / sxx);
    }
    const v = slopes.reduce((a, b) => a + b * b, 0) / slopes.length;
    // 4000 draws: the variance is known to about ±2.2 %
    expect(v / ((6 * Dphi) / (5 * W))).toBeGreaterThan(0.93);
    expect(v / ((6 * Dphi) / (5 * W))).toBeLessThan(1.07);
    // and the window's frequency term is that slope for D_φ = D/(2A²)
    const A = 1e-3, D = 2 * A * A * Dphi;
    const T = 60;
    const ex = extraVariance(D, D, { period_s: T, amplitude_rad: A, span_s: W }, 'viscous');
    const varOmega = (6 * Dphi) / (5 * W);
    expect(ex.period_s2).toBeCloseTo(((T * T) / (2 * Math.PI)) ** 2 * varOmega, 12);
    expect(ex.decay_rate_per_s2).toBeCloseTo(varOmega, 18);
  });

  it('the fluctuation–dissipation value: D_φ = 2·k_B·T/(κ·τ·A²)', () => {
    const kappa = 1.1e-7, tau = 3.8e4, A = 2e-4;
    expect(thermalDiffusion(295, kappa, 1 / tau) / (2 * A * A)).toBeCloseTo((2 * 1.380649e-23 * 295) / (kappa * tau * A * A), 20);
  });

  it('recovers D from windows whose errors are readout plus a walk, and reads 0 without a walk', () => {
    for (const D of [0, 1e-14, 1e-12]) {
      const n = normals(11);
      const est = new DiffusionEstimator();
      const T = 60, W = 240, A = 1e-4, sFit = 2e-4;
      const ex = extraVariance(1, 1, { period_s: T, amplitude_rad: A, span_s: W }, 'viscous');
      // one window per period, independent errors only between windows a window length apart: draw four interleaved chains
      for (let k = 0; k < 600; k++) {
        const e = sFit * n() + Math.sqrt(D * ex.period_s2) * n();
        const r = 1e-6 * n() + Math.sqrt(D * ex.decay_rate_per_s2) * n();
        est.push({ t_mid_s: k * T, span_s: W, period_s: T + e, period_fit_sigma_s: sFit, decay_rate_per_s: 1e-4 + r, decay_rate_fit_sigma_per_s: 1e-6, amplitude_rad: A });
      }
      const got = est.estimate()!;
      // 480 overlapping triplets estimate D to about ±11 % (40 seeds): allow 3 SD
      if (D === 0) {
        expect(got.period * ex.period_s2).toBeLessThan(0.35 * sFit * sFit);
      } else {
        for (const v of [got.period / D, got.rate / D]) {
          expect(v).toBeGreaterThan(0.65);
          expect(v).toBeLessThan(1.35);
        }
      }
    }
  });

  it('a linear drift of the period does not read as diffusion; a few wild windows do not move it', () => {
    const n = normals(5);
    const est = new DiffusionEstimator();
    for (let k = 0; k < 400; k++) {
      const wild = k % 97 === 13 ? 0.5 : 0;
      est.push({ t_mid_s: k * 60, span_s: 240, period_s: 60 + 1e-6 * k + 1e-4 * n() + wild, period_fit_sigma_s: 1e-4, decay_rate_per_s: 1e-4, decay_rate_fit_sigma_per_s: 1e-6, amplitude_rad: 1e-3 });
    }
    const ex = extraVariance(1, 1, { period_s: 60, amplitude_rad: 1e-3, span_s: 240 }, 'viscous');
    expect(est.estimate()!.period * ex.period_s2).toBeLessThan(0.35 * 1e-8);
  });
});

describe('thermal residual variance', () => {
  it('equals the residual variance of a least-squares fit under the thermal covariance, computed directly', () => {
    // direct: OLS projection of the viscous oscillator's autocovariance R(τ) = θ²·e^{−γ|τ|}(cos ω_d τ + γ/ω_d sin ω_d|τ|)
    // (the textbook stationary response to white torque noise), trace((1 − H) R (1 − H))/(n − 6)
    const T = 60, Q = 2000, w0 = (2 * Math.PI) / T, g = w0 / (2 * Q), wd = Math.sqrt(w0 * w0 - g * g);
    const kappa = 1e-5 * w0 * w0, kT = 1.380649e-23 * 295, th2 = kT / kappa;
    const W = 4 * T, n = 160;
    const t = Array.from({ length: n }, (_, i) => -W / 2 + (i * W) / (n - 1));
    const X = new Matrix(t.map((u) => [1, u, Math.cos(wd * u), Math.sin(wd * u), u * Math.cos(wd * u), u * Math.sin(wd * u)]));
    const R = new Matrix(t.map((a) => t.map((b) => { const d = Math.abs(a - b); return th2 * Math.exp(-g * d) * (Math.cos(wd * d) + (g / wd) * Math.sin(wd * d)); })));
    const H = X.mmul(solve(X.transpose().mmul(X), X.transpose()));
    const M = Matrix.eye(n).sub(H);
    const direct = M.mmul(R).mmul(M).trace() / (n - 6);
    const D = thermalDiffusion(295, kappa, g);
    expect(thermalResidualVariance(D, T, W, 'viscous') / direct).toBeGreaterThan(0.95);
    expect(thermalResidualVariance(D, T, W, 'viscous') / direct).toBeLessThan(1.05);
  });
});
