/**
 * Systematic uncertainties of a run's κ and G: the hand-measured inertia and
 * fibre dimensions are the same for every window of a run, so their errors do
 * not average down over windows. They are added once, to the run's mean, in
 * quadrature with its statistical σ (docs/analysis.md, "The run").
 *
 * Relative sensitivities, first order: κ = I·ω₀², so σ_κ/κ = σ_I/I. G follows
 * from κ through shearModulusFor (derive.ts), which is linear in κ and L and, for
 * a round fibre without tension, ∝ d⁻⁴: 4·σ_d/d; a thin ribbon gives σ_w/w and
 * 3·σ_t/t. The tension term and the ribbon's finite-width factor bend these
 * slightly, so the sensitivities are taken as central differences of the formula
 * itself rather than written out once more.
 */
import { shearModulusFor, type DeriveContext } from './derive.js';

/** The hand-measured standard uncertainties (SI); absent means 0. */
export interface Systematics {
  inertia_sigma_kg_m2?: number;
  diameter_sigma_m?: number;
  length_sigma_m?: number;
  width_sigma_m?: number;
  thickness_sigma_m?: number;
}

/** Relative (σ/value) systematic terms, by source; only the sources that apply are present. */
export type SystematicTerms = Partial<Record<'inertia' | 'diameter' | 'length' | 'width' | 'thickness', number>>;

/** Combined relative systematic σ of a set of terms: their quadrature sum. */
export function combinedRelative(terms: SystematicTerms): number {
  let s = 0;
  for (const v of Object.values(terms)) if (v !== undefined) s += v * v;
  return Math.sqrt(s);
}

/** The relative systematic terms of κ (the inertia alone). */
export function kappaSystematics(ctx: DeriveContext, sys: Systematics): SystematicTerms {
  const I = ctx.inertia_kg_m2;
  return I !== undefined && I > 0 ? { inertia: (sys.inertia_sigma_kg_m2 ?? 0) / I } : {};
}

// relative step of the central differences: error ~h² ≈ 1e-12, rounding ~1e-16/h ≈ 1e-10
const H = 1e-6;

/** The relative systematic terms of G at the run's κ; null when the context gives no G. */
export function shearModulusSystematics(kappa: number, ctx: DeriveContext, sys: Systematics): SystematicTerms | null {
  const base = shearModulusFor(kappa, ctx);
  if (!base) return null;
  // |∂ln G/∂ln x|·σ_x/x, by a central difference over x
  const term = (sigma: number | undefined, value: number | undefined, vary: (f: number) => number | null): number | undefined => {
    if (value === undefined || !(value > 0)) return undefined;
    const up = vary(1 + H), down = vary(1 - H);
    if (up === null || down === null) return undefined;
    return Math.abs((up - down) / (2 * H * base.G)) * ((sigma ?? 0) / value);
  };
  const G = (k: number, c: DeriveContext): number | null => shearModulusFor(k, c)?.G ?? null;
  const out: SystematicTerms = {};
  const put = (k: keyof SystematicTerms, v: number | undefined) => { if (v !== undefined) out[k] = v; };
  // κ ∝ I: varying I varies the κ the windows measured
  put('inertia', term(sys.inertia_sigma_kg_m2, ctx.inertia_kg_m2, (f) => G(kappa * f, ctx)));
  put('length', term(sys.length_sigma_m, ctx.length_m, (f) => G(kappa, { ...ctx, length_m: ctx.length_m! * f })));
  if (ctx.diameter_m !== undefined && ctx.diameter_m > 0) {
    put('diameter', term(sys.diameter_sigma_m, ctx.diameter_m, (f) => G(kappa, { ...ctx, diameter_m: ctx.diameter_m! * f })));
  } else {
    put('width', term(sys.width_sigma_m, ctx.width_m, (f) => G(kappa, { ...ctx, width_m: ctx.width_m! * f })));
    put('thickness', term(sys.thickness_sigma_m, ctx.thickness_m, (f) => G(kappa, { ...ctx, thickness_m: ctx.thickness_m! * f })));
  }
  return out;
}
