/**
 * Quantities derived from one window's damped-sine fit, each with its
 * statistical standard uncertainty propagated to first order through the fit's
 * full covariance (the period T and the decay rate γ = 1/τ are correlated).
 *
 * Standard physics of the damped torsion oscillator (docs/physics.md, "The
 * damped oscillator" and "Fibres"): ω_d = 2π/T; ω₀² = ω_d² + γ² for viscous
 * damping, ω₀² = ω_d² − γ² for internal damping (a constant loss angle);
 * T₀ = 2π/ω₀, Q = ω₀/(2γ) = π·τ/T₀, log decrement δ = T/τ, κ = I·ω₀²; G from κ
 * with the tension term taken out: round fibre G = 32·(κ·L − F·d²/8)/(π·d⁴), ribbon
 * G = (κ·L − F·(w² + t²)/12)/(β·w·t³). The formulas are in src/physics/torsion.ts;
 * the derivatives for the propagation are written out here.
 *
 * Only the fit's own (statistical) uncertainty is propagated: the hand-measured
 * inertia and dimensions are systematic for a whole run and enter the run's κ and
 * G once (src/analysis/systematics.ts), never each window's.
 */
import { kappaFromPeriod, shearModulusRibbon, shearModulusRound } from '../physics/torsion.js';
import type { Damping } from '../physics/thermal.js';

/** What `deriveQuantities` reads from a fit (a DampedSineFit satisfies it). */
export interface FitForDerive {
  period_s: number | null;
  /** γ = 1/τ, 1/s */
  decay_rate_per_s: number | null;
  /** covariance in DAMPED_SINE_PARAMS order; rows/cols 4 (period) and 5 (decay rate) are used */
  covariance: number[][] | null;
}

/** The pendulum and fibre as far as they are known (SI): nominal values only, no hand-measured σ's. */
export interface DeriveContext {
  inertia_kg_m2?: number;
  /** round fibre */
  diameter_m?: number;
  length_m?: number;
  /** flat ribbon (used when width and thickness are given and no diameter) */
  width_m?: number;
  thickness_m?: number;
  /** tensile force on the fibre (the suspended weight), N: its stiffening is taken out of G (default 0) */
  tension_N?: number;
  /** how the undamped period follows from the damped one (default 'internal') */
  damping?: Damping;
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

/** G from κ for the context's fibre, and ∂G/∂κ; null without a full geometry or for a non-positive G. */
export function shearModulusFor(kappa: number, ctx: DeriveContext): { G: number; dG_dkappa: number } | null {
  const L = ctx.length_m, F = ctx.tension_N ?? 0;
  if (L === undefined || !(L > 0)) return null;
  let G: number, dG: number;
  if (ctx.diameter_m !== undefined && ctx.diameter_m > 0) {
    const d = ctx.diameter_m;
    G = shearModulusRound(kappa, d, L, F);
    dG = shearModulusRound(1, d, L); // linear in κ: the slope is G(κ = 1) without tension
  } else if (ctx.width_m !== undefined && ctx.width_m > 0 && ctx.thickness_m !== undefined && ctx.thickness_m > 0) {
    G = shearModulusRibbon(kappa, ctx.width_m, ctx.thickness_m, L, F);
    dG = shearModulusRibbon(1, ctx.width_m, ctx.thickness_m, L);
  } else return null;
  return G > 0 ? { G, dG_dkappa: dG } : null;
}

/** Undamped period, Q, log decrement, torsion constant and shear modulus with propagated statistical uncertainties. */
export function deriveQuantities(fit: FitForDerive, ctx: DeriveContext = {}): Derived {
  const T = fit.period_s, gRaw = fit.decay_rate_per_s;
  if (T === null || !(T > 0) || !Number.isFinite(T)) return { ...NULLS };
  const g = gRaw ?? 0;
  const C = fit.covariance;
  const cTT = C ? C[4][4] : 0, cTg = C ? C[4][5] : 0, cgg = C ? C[5][5] : 0;
  // σ of f(T, γ) from its gradient (a, b)
  const prop = (a: number, b: number): number => Math.sqrt(Math.max(a * a * cTT + 2 * a * b * cTg + b * b * cgg, 0));

  const out: Derived = { ...NULLS };
  out.log_decrement = T * g;
  out.log_decrement_sigma = prop(g, T);
  const wd = (2 * Math.PI) / T;
  // ω₀² = ω_d² ± γ²: + viscous, − internal (docs/physics.md, "Damping in fibres")
  const sign = (ctx.damping ?? 'internal') === 'viscous' ? 1 : -1;
  const W = wd * wd + sign * g * g;
  if (!(W > 0)) return out;
  const dWdT = (-2 * wd * wd) / T, dWdg = 2 * sign * g;
  const T0 = (2 * Math.PI) / Math.sqrt(W);
  const k = -Math.PI / W ** 1.5; // ∂T₀/∂W
  out.undamped_period_s = T0;
  out.undamped_period_sigma_s = prop(k * dWdT, k * dWdg);
  if (g > 0) {
    // Q = √W/(2γ)
    const sW = Math.sqrt(W);
    const q = sW / (2 * g);
    out.q = q;
    out.q_sigma = prop(dWdT / (4 * g * sW), dWdg / (4 * g * sW) - q / g);
  }
  const I = ctx.inertia_kg_m2;
  if (I !== undefined && I > 0) {
    const kappa = kappaFromPeriod(I, T0);
    const sK = I * prop(dWdT, dWdg);
    out.kappa_Nm_per_rad = kappa;
    out.kappa_sigma_Nm_per_rad = sK;
    const s = shearModulusFor(kappa, ctx);
    if (s) {
      out.shear_modulus_Pa = s.G;
      out.shear_modulus_sigma_Pa = s.dG_dkappa * sK;
    }
  }
  return out;
}
