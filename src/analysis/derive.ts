/**
 * Quantities derived from one window's damped-sine fit, each with its
 * standard uncertainty propagated to first order through the fit's full
 * covariance (the period T and the decay rate γ = 1/τ are correlated).
 *
 * Standard physics of the damped torsion oscillator (docs/physics.md, "The
 * damped oscillator" and "Fibres"; any mechanics text): ω_d = 2π/T,
 * ω₀² = ω_d² + γ², T₀ = 2π/ω₀, Q = ω₀τ/2 = π·τ/T₀, log decrement δ = T/τ,
 * κ = I·ω₀² = I·(2π/T₀)², round fibre G = 32·κ·L/(π·d⁴), flat ribbon
 * G = 3·κ·L/(w·t³) (w ≫ t). The values come from src/physics/torsion.ts;
 * their derivatives, for the propagation, are written out here.
 */
import { kappaFromPeriod, qFromDecay, shearModulusRibbon, shearModulusRound, undampedPeriod } from '../physics/torsion.js';

/** What `deriveQuantities` reads from a fit (a DampedSineFit satisfies it). */
export interface FitForDerive {
  period_s: number | null;
  /** γ = 1/τ, 1/s */
  decay_rate_per_s: number | null;
  /** covariance in DAMPED_SINE_PARAMS order; rows/cols 4 (period) and 5 (decay rate) are used */
  covariance: number[][] | null;
}

/** The pendulum and fibre as far as they are known (SI); sigmas default 0. */
export interface DeriveContext {
  inertia_kg_m2?: number;
  inertia_sigma_kg_m2?: number;
  /** round fibre */
  diameter_m?: number;
  diameter_sigma_m?: number;
  length_m?: number;
  length_sigma_m?: number;
  /** flat ribbon (used when width and thickness are given and no diameter) */
  width_m?: number;
  width_sigma_m?: number;
  thickness_m?: number;
  thickness_sigma_m?: number;
}

/** Derived quantities; null where an input is missing or the decay is not resolved (γ ≤ 0). */
export interface Derived {
  undamped_period_s: number | null;
  undamped_period_sigma_s: number | null;
  q: number | null;
  q_sigma: number | null;
  log_decrement: number | null;
  log_decrement_sigma: number | null;
  kappa_Nm_per_rad: number | null;
  kappa_sigma_Nm_per_rad: number | null;
  shear_modulus_Pa: number | null;
  shear_modulus_sigma_Pa: number | null;
}

const NULLS: Derived = {
  undamped_period_s: null, undamped_period_sigma_s: null, q: null, q_sigma: null,
  log_decrement: null, log_decrement_sigma: null, kappa_Nm_per_rad: null, kappa_sigma_Nm_per_rad: null,
  shear_modulus_Pa: null, shear_modulus_sigma_Pa: null,
};

/** Undamped period, Q, log decrement, torsion constant and shear modulus with propagated uncertainties. */
export function deriveQuantities(fit: FitForDerive, ctx: DeriveContext = {}): Derived {
  const T = fit.period_s, gRaw = fit.decay_rate_per_s;
  if (T === null || !(T > 0) || !Number.isFinite(T)) return { ...NULLS };
  const g = gRaw ?? 0;
  const C = fit.covariance;
  const cTT = C ? C[4][4] : 0, cTg = C ? C[4][5] : 0, cgg = C ? C[5][5] : 0;
  // σ² of f(T, γ) from its gradient (a, b)
  const prop = (a: number, b: number): number => Math.sqrt(Math.max(a * a * cTT + 2 * a * b * cTg + b * b * cgg, 0));

  const wd = (2 * Math.PI) / T;
  const W = wd * wd + g * g; // ω₀²
  const dWdT = (-2 * wd * wd) / T, dWdg = 2 * g;
  const T0 = undampedPeriod(T, g > 0 ? 1 / g : Infinity);
  const k = -Math.PI / W ** 1.5; // ∂T₀/∂W
  const dT0dT = k * dWdT, dT0dg = k * dWdg;
  const out: Derived = { ...NULLS };
  out.undamped_period_s = T0;
  out.undamped_period_sigma_s = prop(dT0dT, dT0dg);
  out.log_decrement = T * g;
  out.log_decrement_sigma = prop(g, T);
  if (g > 0) {
    const q = qFromDecay(1 / g, T0);
    out.q = q;
    out.q_sigma = prop((-q / T0) * dT0dT, -q / g - (q / T0) * dT0dg);
  }
  const I = ctx.inertia_kg_m2;
  if (I !== undefined && I > 0) {
    const sI = ctx.inertia_sigma_kg_m2 ?? 0;
    const kappa = kappaFromPeriod(I, T0);
    const sK = Math.sqrt((W * sI) ** 2 + (I * prop(dWdT, dWdg)) ** 2);
    out.kappa_Nm_per_rad = kappa;
    out.kappa_sigma_Nm_per_rad = sK;
    const L = ctx.length_m;
    const rel = (s: number | undefined, v: number, p = 1): number => (p * (s ?? 0)) / v;
    if (L !== undefined && L > 0 && ctx.diameter_m !== undefined && ctx.diameter_m > 0) {
      const d = ctx.diameter_m;
      const G = shearModulusRound(kappa, d, L);
      out.shear_modulus_Pa = G;
      out.shear_modulus_sigma_Pa = G * Math.hypot(sK / kappa, rel(ctx.length_sigma_m, L), rel(ctx.diameter_sigma_m, d, 4));
    } else if (L !== undefined && L > 0 && ctx.width_m !== undefined && ctx.width_m > 0 && ctx.thickness_m !== undefined && ctx.thickness_m > 0) {
      const w = ctx.width_m, th = ctx.thickness_m;
      const G = shearModulusRibbon(kappa, w, th, L);
      out.shear_modulus_Pa = G;
      out.shear_modulus_sigma_Pa = G * Math.hypot(sK / kappa, rel(ctx.length_sigma_m, L), rel(ctx.width_sigma_m, w), rel(ctx.thickness_sigma_m, th, 3));
    }
  }
  return out;
}
