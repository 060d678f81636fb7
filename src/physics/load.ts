/**
 * Tensile load on a fibre carrying a suspended mass (docs/physics.md, "Fibres").
 * Fibres are commonly loaded to about half their breaking stress (common
 * practice). Caution: a computed fraction is guidance, not certification —
 * a break drops the mass; use a catcher, enclose the pendulum, stay within
 * the fibre's rated load and follow local codes and licensed practice.
 */
import { G_STANDARD } from './constants.js';

/** Weight F = m·g (N) of a suspended mass m (kg): the tension in the fibre; g defaults to g_n. */
export function suspendedWeight(m: number, g = G_STANDARD): number {
  return m * g;
}

/** Tensile stress σ = m·g/(π·d²/4) (Pa) in a round fibre of diameter d (m) carrying mass m (kg); g defaults to g_n. */
export function tensileStress(m: number, d: number, g = G_STANDARD): number {
  return (m * g) / ((Math.PI * d * d) / 4);
}

/** Breaking load (kg) of a round fibre of diameter d (m) and tensile strength σ_UTS (Pa), g defaults to g_n. */
export function breakingMass(d: number, tensileStrength: number, g = G_STANDARD): number {
  return (tensileStrength * Math.PI * d * d) / 4 / g;
}

/** Fraction of the breaking load (σ/σ_UTS, dimensionless) a mass m (kg) puts on a fibre of diameter d (m). */
export function loadFraction(m: number, d: number, tensileStrength: number, g = G_STANDARD): number {
  return tensileStress(m, d, g) / tensileStrength;
}
