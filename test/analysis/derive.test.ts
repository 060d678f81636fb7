/**
 * Derived quantities. References: the damped-oscillator relations
 * ω₀² = ω_d² + 1/τ², Q = ω₀τ/2, and the fibre torsion constant
 * κ = π·G·d⁴/(32·L) (round) and κ = G·w·t³/(3·L) (ribbon), standard
 * mechanics (e.g. Landau & Lifshitz, Mechanics §25; Timoshenko, Strength of
 * Materials — from memory). The oscillator is built here from I, κ and Q,
 * the way it is defined, and the function has to come back to them.
 */
import { describe, expect, it } from 'vitest';
import { deriveQuantities, type FitForDerive } from '../../src/analysis/derive.js';

// a tungsten fibre scenario of our own: d = 25 µm, L = 0.8 m, G = 161 GPa, I = 3.6e-5 kg m²
const d = 25e-6, L = 0.8, G = 161e9, I = 3.6e-5;
const kappa = (Math.PI * G * d ** 4) / (32 * L);
const w0 = Math.sqrt(kappa / I);
const Qtrue = 30;
const tau = (2 * Qtrue) / w0;
const wd = w0 * Math.sqrt(1 - 1 / (4 * Qtrue * Qtrue));
const T = (2 * Math.PI) / wd;

function cov(sT: number, sg: number, rho: number): number[][] {
  const c = Array.from({ length: 6 }, () => new Array(6).fill(0));
  c[4][4] = sT * sT; c[5][5] = sg * sg; c[4][5] = c[5][4] = rho * sT * sg;
  return c;
}

describe('deriveQuantities', () => {
  it('comes back to T₀, Q, κ and G of the oscillator it was built from', () => {
    const out = deriveQuantities({ period_s: T, decay_rate_per_s: 1 / tau, covariance: cov(0, 0, 0) }, { inertia_kg_m2: I, diameter_m: d, length_m: L });
    expect(out.undamped_period_s! / ((2 * Math.PI) / w0)).toBeCloseTo(1, 12);
    expect(out.q! / Qtrue).toBeCloseTo(1, 12);
    expect(out.log_decrement! / (T / tau)).toBeCloseTo(1, 12);
    expect(Math.abs(out.log_decrement! - Math.PI / Qtrue)).toBeLessThan(1e-3); // δ ≈ π/Q for large Q
    expect(out.kappa_Nm_per_rad! / kappa).toBeCloseTo(1, 12);
    expect(out.shear_modulus_Pa! / G).toBeCloseTo(1, 12);
    expect(out.kappa_sigma_Nm_per_rad).toBe(0);
  });

  it('ribbon formula G = 3κL/(w t³)', () => {
    const w = 1e-3, th = 2e-5;
    const k = (G * w * th ** 3) / (3 * L);
    const Ir = k / w0 ** 2;
    const out = deriveQuantities({ period_s: T, decay_rate_per_s: 1 / tau, covariance: null }, { inertia_kg_m2: Ir, width_m: w, thickness_m: th, length_m: L });
    expect(out.shear_modulus_Pa! / G).toBeCloseTo(1, 12);
  });

  it('uncertainties equal a numerical propagation through the correlated (T, γ) covariance', () => {
    const sT = 1e-3 * T, sg = 0.05 / tau, rho = -0.6;
    const c = cov(sT, sg, rho);
    const ctx = { inertia_kg_m2: I, inertia_sigma_kg_m2: 0.01 * I, diameter_m: d, diameter_sigma_m: 0.02 * d, length_m: L, length_sigma_m: 1e-3 };
    const base: FitForDerive = { period_s: T, decay_rate_per_s: 1 / tau, covariance: c };
    const out = deriveQuantities(base, ctx);
    const keys = ['undamped_period_s', 'q', 'log_decrement', 'kappa_Nm_per_rad', 'shear_modulus_Pa'] as const;
    const f = (Tv: number, gv: number, extra: Partial<typeof ctx> = {}) => deriveQuantities({ period_s: Tv, decay_rate_per_s: gv, covariance: c }, { ...ctx, ...extra });
    const hT = 1e-6 * T, hg = 1e-6 / tau;
    for (const k of keys) {
      const a = ((f(T + hT, 1 / tau)[k] as number) - (f(T - hT, 1 / tau)[k] as number)) / (2 * hT);
      const b = ((f(T, 1 / tau + hg)[k] as number) - (f(T, 1 / tau - hg)[k] as number)) / (2 * hg);
      let v = a * a * c[4][4] + 2 * a * b * c[4][5] + b * b * c[5][5];
      if (k === 'kappa_Nm_per_rad' || k === 'shear_modulus_Pa') {
        const val = out[k] as number;
        v += (val * 0.01) ** 2; // inertia, linear in κ and G
        if (k === 'shear_modulus_Pa') v += (val * 1e-3 / L) ** 2 + (val * 4 * 0.02) ** 2;
      }
      const sigKey = ({ undamped_period_s: 'undamped_period_sigma_s', q: 'q_sigma', log_decrement: 'log_decrement_sigma', kappa_Nm_per_rad: 'kappa_sigma_Nm_per_rad', shear_modulus_Pa: 'shear_modulus_sigma_Pa' } as const)[k];
      expect((out[sigKey] as number) / Math.sqrt(v), k).toBeCloseTo(1, 5);
    }
    // the correlation matters: flipping its sign changes σ_Q
    const flipped = deriveQuantities({ ...base, covariance: cov(sT, sg, +0.6) }, ctx);
    expect(Math.abs(flipped.q_sigma! / out.q_sigma! - 1)).toBeGreaterThan(1e-3);
  });

  it('no resolved decay: Q null, T₀ = T, missing inputs give null', () => {
    const out = deriveQuantities({ period_s: T, decay_rate_per_s: -1e-6, covariance: cov(1e-3, 1e-6, 0) });
    expect(out.q).toBeNull();
    expect(out.q_sigma).toBeNull();
    expect(out.undamped_period_s!).toBeCloseTo(T, 3);
    expect(out.kappa_Nm_per_rad).toBeNull();
    expect(out.shear_modulus_Pa).toBeNull();
    expect(deriveQuantities({ period_s: null, decay_rate_per_s: null, covariance: null }).undamped_period_s).toBeNull();
  });
});
