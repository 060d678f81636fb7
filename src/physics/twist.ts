/**
 * Elastic twist limit of a round fibre (docs/physics.md, "How far a fibre may be
 * twisted"): surface shear strain γ = θ·d/(2L), stress τ = G·γ. The fibre also carries
 * its load in tension, σ = F/(π·d²/4), so the two are combined as a von Mises
 * equivalent stress √(σ² + 3τ²) (common practice) against √3·τ_allow, the equivalent of
 * the allowable stress in pure torsion: without a load the limit is
 * θ_max = 2·L·τ_allow/(G·d), with one θ_max = 2·L·√(τ_allow² − σ²/3)/(G·d).
 *
 * Caution: these limits are guidance from handbook values, not a rating of
 * a particular fibre. A fibre that breaks drops its mass: use a catcher,
 * enclose the pendulum, and defer to the maker's rating, local codes and
 * licensed practice.
 */
import { tensileStrengthAt, type Material } from './materials.js';

/** Default allowable torsional stress fraction of the tensile strength where the table gives none (assumed, no source). */
export const DEFAULT_TORSION_FRACTION = 0.4;

/** Surface shear strain γ = θ·d/(2·L) (dimensionless) for twist θ (rad), diameter d and length L (m). */
export function surfaceShearStrain(theta: number, d: number, L: number): number {
  return (theta * d) / (2 * L);
}

/** Surface shear stress τ = G·θ·d/(2·L) (Pa). */
export function surfaceShearStress(G: number, theta: number, d: number, L: number): number {
  return G * surfaceShearStrain(theta, d, L);
}

/** von Mises equivalent stress √(σ² + 3·τ²) (Pa) of a tensile stress σ and a shear stress τ (Pa). */
export function vonMisesStress(sigma: number, tau: number): number {
  return Math.sqrt(sigma * sigma + 3 * tau * tau);
}

/** Largest elastic twist θ_max = 2·L·τ_allow/(G·d) (rad) for an allowable surface shear stress τ_allow (Pa). */
export function maxElasticTwist(L: number, allowableShear: number, G: number, d: number): number {
  return (2 * L * allowableShear) / (G * d);
}

export interface TwistLimit {
  /** largest twist that stays elastic, rad */
  theta_max_rad: number;
  /** the same in full turns */
  turns: number;
  /** allowable surface shear stress in pure torsion, Pa */
  allowable_shear_Pa: number;
  /** tensile stress from the suspended load, Pa (0 without one) */
  tensile_stress_Pa: number;
  /** shear stress left for twisting once the load is carried, Pa: √(τ_allow² − σ²/3), 0 when the load alone reaches the limit */
  twist_shear_Pa: number;
  /** where the allowable stress comes from */
  basis: string;
}

export interface TwistLimitOptions {
  /** allowable shear as a fraction of the tensile strength; default: the material's (music wire 0.45), else DEFAULT_TORSION_FRACTION */
  allowableFraction?: number;
  /** shear modulus override, Pa (default: the material's) */
  shearModulus_Pa?: number;
  /** tensile strength override, Pa (default: the material's at this diameter) */
  tensileStrength_Pa?: number;
  /** tensile force on the fibre (the suspended weight), N; default 0 */
  tension_N?: number;
}

/** Elastic twist limit of a round fibre {diameter_m, length_m} of the given material. */
export function twistLimit(fibre: { diameter_m: number; length_m: number }, material: Material, opts: TwistLimitOptions = {}): TwistLimit {
  const G = opts.shearModulus_Pa ?? material.shearModulus.value;
  const uts = opts.tensileStrength_Pa ?? tensileStrengthAt(material, fibre.diameter_m);
  const utsBasis = opts.tensileStrength_Pa !== undefined ? 'given tensile strength' : `${material.name} tensile strength at d = ${fibre.diameter_m} m (${material.tensileStrength.source})`;
  let fraction: number;
  let fracBasis: string;
  if (opts.allowableFraction !== undefined) {
    fraction = opts.allowableFraction;
    fracBasis = 'given fraction';
  } else if (material.torsionFraction) {
    fraction = material.torsionFraction.value;
    fracBasis = material.torsionFraction.source;
  } else {
    fraction = DEFAULT_TORSION_FRACTION;
    fracBasis = 'assumed default fraction (no source)';
  }
  const allow = fraction * uts;
  const sigma = (opts.tension_N ?? 0) / ((Math.PI * fibre.diameter_m ** 2) / 4);
  // von Mises: σ² + 3τ² ≤ 3·τ_allow², so the twist may use √(τ_allow² − σ²/3)
  const left = Math.sqrt(Math.max(allow * allow - (sigma * sigma) / 3, 0));
  const theta = maxElasticTwist(fibre.length_m, left, G, fibre.diameter_m);
  const load = sigma > 0
    ? `; combined with the load's tensile stress ${(sigma / 1e6).toPrecision(3)} MPa as von Mises √(σ² + 3τ²) ≤ √3·τ_allow${left === 0 ? ' — the load alone reaches it' : ''}`
    : '';
  return {
    theta_max_rad: theta,
    turns: theta / (2 * Math.PI),
    allowable_shear_Pa: allow,
    tensile_stress_Pa: sigma,
    twist_shear_Pa: left,
    basis: `τ_allow = ${(fraction * 100).toFixed(0)} % of ${utsBasis}; fraction: ${fracBasis}${load}`,
  };
}
