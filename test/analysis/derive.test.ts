/**
 * Derived quantities. References: the damped-oscillator relations
 * ω₀² = ω_d² + 1/τ² (viscous), Q = ω₀τ/2, and the fibre torsion constant
 * κ = π·G·d⁴/(32·L) (round) (standard mechanics, e.g. Landau & Lifshitz,
 * Mechanics §25; Timoshenko, Strength of Materials — from memory); for internal
 * damping the complex stiffness κ(1 + i/Q) (Saulson 1990), whose free motion is
 * worked out here by hand in polar form. The oscillator is built here from I, κ
 * and Q, the way it is defined, and the function has to come back to them.
 */
import { describe, expect, it } from 'vitest';
import { deriveQuantities, type DeriveContext, type FitForDerive } from '../../src/analysis/derive.js';

// a tungsten fibre scenario of our own: d = 25 µm, L = 0.8 m, G = 161 GPa, I = 3.6e-5 kg m²
const d = 25e-6, L = 0.8, G = 161e9, I = 3.6e-5;
const kappa = (Math.PI * G * d ** 4) / (32 * L);
const w0 = Math.sqrt(kappa / I);
const Qtrue = 30;
// viscous: ω_d = ω₀·√(1 − 1/(4Q²)), τ = 2Q/ω₀
const tau = (2 * Qtrue) / w0;
const wd = w0 * Math.sqrt(1 - 1 / (4 * Qtrue * Qtrue));
const T = (2 * Math.PI) / wd;
const viscous: DeriveContext = { damping: 'viscous' };

function cov(sT: number, sg: number, rho: number): number[][] {
  const c = Array.from({ length: 6 }, () => new Array(6).fill(0));
  c[4][4] = sT * sT; c[5][5] = sg * sg; c[4][5] = c[5][4] = rho * sT * sg;
  return c;
}

describe('deriveQuantities', () => {
  it('comes back to T₀, Q, κ and G of the (viscously damped) oscillator it was built from', () => {
    const out = deriveQuantities({ period_s: T, decay_rate_per_s: 1 / tau, covariance: cov(0, 0, 0) }, { ...viscous, inertia_kg_m2: I, diameter_m: d, length_m: L });
    expect(out.undamped_period_s! / ((2 * Math.PI) / w0)).toBeCloseTo(1, 12);
    expect(out.q! / Qtrue).toBeCloseTo(1, 12);
    expect(out.log_decrement! / (T / tau)).toBeCloseTo(1, 12);
    expect(Math.abs(out.log_decrement! - Math.PI / Qtrue)).toBeLessThan(1e-3); // δ ≈ π/Q for large Q
    expect(out.kappa_Nm_per_rad! / kappa).toBeCloseTo(1, 12);
    expect(out.shear_modulus_Pa! / G).toBeCloseTo(1, 12);
    expect(out.kappa_sigma_Nm_per_rad).toBe(0);
  });

  it('internal damping (the default): the free motion of −I·ω² + κ·(1 + i/Q) = 0 gives back κ and Q', () => {
    // ω = ω₀·√(1 + i/Q) = ω₀·(1 + 1/Q²)^¼·e^(i·atan(1/Q)/2): oscillation Re ω, decay rate Im ω
    const mod = w0 * (1 + 1 / Qtrue ** 2) ** 0.25, arg = Math.atan(1 / Qtrue) / 2;
    const wdi = mod * Math.cos(arg), g = mod * Math.sin(arg);
    const out = deriveQuantities({ period_s: (2 * Math.PI) / wdi, decay_rate_per_s: g, covariance: null }, { inertia_kg_m2: I });
    expect(out.kappa_Nm_per_rad! / kappa).toBeCloseTo(1, 12);
    // Q = ω₀/(2γ) differs from the loss angle's 1/φ by ω₀/ω_d ≈ 1 − 1/(8Q²) (docs/physics.md)
    expect(out.q! / (w0 / (2 * g))).toBeCloseTo(1, 12);
    expect(Math.abs(out.q! / Qtrue - 1)).toBeLessThan(1 / (4 * Qtrue * Qtrue));
    // read as viscous, the same fit puts κ too high by about 2γ²/ω₀² = 1/(2Q²)
    const v = deriveQuantities({ period_s: (2 * Math.PI) / wdi, decay_rate_per_s: g, covariance: null }, { ...viscous, inertia_kg_m2: I });
    expect(v.kappa_Nm_per_rad! / kappa - 1).toBeCloseTo(1 / (2 * Qtrue * Qtrue), 5);
  });

  it('a suspended load: G from κ subtracts the tension term F·d²/(8L)', () => {
    const F = 0.1 * 9.80665;
    const kT = kappa + (F * d * d) / (8 * L); // κ the pendulum shows, with the load's stiffening
    const Iload = kT / w0 ** 2;
    const out = deriveQuantities({ period_s: T, decay_rate_per_s: 1 / tau, covariance: null }, { ...viscous, inertia_kg_m2: Iload, diameter_m: d, length_m: L, tension_N: F });
    expect(out.kappa_Nm_per_rad! / kT).toBeCloseTo(1, 12);
    expect(out.shear_modulus_Pa! / G).toBeCloseTo(1, 10);
  });

  it('ribbon: G = κL/(β·w·t³), β the Saint-Venant factor (1/3 for w ≫ t)', () => {
    const w = 1e-3, th = 2e-5;
    // β(50) = (1/3)(1 − (192/π⁵)·(1/50)·Σ tanh(nπ·25)/n⁵) = (1/3)(1 − 0.63024/50) to 1e-9 (from memory, Timoshenko & Goodier)
    const beta = (1 - 0.630240 / 50) / 3;
    const k = (beta * G * w * th ** 3) / L;
    const out = deriveQuantities({ period_s: T, decay_rate_per_s: 1 / tau, covariance: null }, { ...viscous, inertia_kg_m2: k / w0 ** 2, width_m: w, thickness_m: th, length_m: L });
    expect(out.shear_modulus_Pa! / G).toBeCloseTo(1, 6);
  });

  it('statistical uncertainties equal a numerical propagation through the correlated (T, γ) covariance', () => {
    const sT = 1e-3 * T, sg = 0.05 / tau, rho = -0.6;
    const c = cov(sT, sg, rho);
    for (const damping of ['internal', 'viscous'] as const) {
      const ctx: DeriveContext = { damping, inertia_kg_m2: I, diameter_m: d, length_m: L, tension_N: 0.05 };
      const base: FitForDerive = { period_s: T, decay_rate_per_s: 1 / tau, covariance: c };
      const out = deriveQuantities(base, ctx);
      const keys = ['undamped_period_s', 'q', 'log_decrement', 'kappa_Nm_per_rad', 'shear_modulus_Pa'] as const;
      const f = (Tv: number, gv: number) => deriveQuantities({ period_s: Tv, decay_rate_per_s: gv, covariance: c }, ctx);
      const hT = 1e-6 * T, hg = 1e-6 / tau;
      for (const k of keys) {
        const a = ((f(T + hT, 1 / tau)[k] as number) - (f(T - hT, 1 / tau)[k] as number)) / (2 * hT);
        const b = ((f(T, 1 / tau + hg)[k] as number) - (f(T, 1 / tau - hg)[k] as number)) / (2 * hg);
        const v = a * a * c[4][4] + 2 * a * b * c[4][5] + b * b * c[5][5];
        const sigKey = ({ undamped_period_s: 'undamped_period_sigma_s', q: 'q_sigma', log_decrement: 'log_decrement_sigma', kappa_Nm_per_rad: 'kappa_sigma_Nm_per_rad', shear_modulus_Pa: 'shear_modulus_sigma_Pa' } as const)[k];
        expect((out[sigKey] as number) / Math.sqrt(v), `${damping} ${k}`).toBeCloseTo(1, 5);
      }
      // the correlation matters: flipping its sign changes σ_Q
      const flipped = deriveQuantities({ ...base, covariance: cov(sT, sg, +0.6) }, ctx);
      expect(Math.abs(flipped.q_sigma! / out.q_sigma! - 1)).toBeGreaterThan(1e-3);
    }
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
