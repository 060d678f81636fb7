/**
 * Elastic twist limit of a round fibre (docs/physics.md, "Fibres"): surface shear
 * strain γ = θ·d/(2L), stress τ = G·γ, largest elastic twist
 * θ_max = 2·L·τ_allow/(G·d).
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

/** Largest elastic twist θ_max = 2·L·τ_allow/(G·d) (rad). */
export function maxElasticTwist(L: number, allowableShear: number, G: number, d: number): number {
  return (2 * L * allowableShear) / (G * d);
}

export interface TwistLimit {
  /** largest twist that stays elastic, rad */
  theta_max_rad: number;
  /** the same in full turns */
  turns: number;
  /** allowable surface shear stress used, Pa */
  allowable_shear_Pa: number;
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
  const theta = maxElasticTwist(fibre.length_m, allow, G, fibre.diameter_m);
  return {
    theta_max_rad: theta,
    turns: theta / (2 * Math.PI),
    allowable_shear_Pa: allow,
    basis: `${(fraction * 100).toFixed(0)} % of ${utsBasis}; fraction: ${fracBasis}`,
  };
}
