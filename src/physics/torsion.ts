/**
 * Torsion-pendulum and torsion-fibre relations (docs/physics.md, "The damped oscillator"
 * and "Fibres"). Pure functions, SI units.
 */

/** Torsion constant κ = 4π²·I/T₀² (N·m/rad) from inertia I (kg·m²) and undamped period T₀ (s). */
export function kappaFromPeriod(I: number, T0: number): number {
  return (4 * Math.PI * Math.PI * I) / (T0 * T0);
}

/** Undamped period T₀ = 2π·√(I/κ) (s) from inertia I (kg·m²) and torsion constant κ (N·m/rad). */
export function periodFromKappa(I: number, kappa: number): number {
  return 2 * Math.PI * Math.sqrt(I / kappa);
}

/**
 * Undamped period T₀ (s) from the damped period T_d (s) and the amplitude
 * decay time τ (s): ω₀² = ω_d² + 1/τ².
 */
export function undampedPeriod(Td: number, tau: number): number {
  const wd = (2 * Math.PI) / Td;
  return (2 * Math.PI) / Math.sqrt(wd * wd + 1 / (tau * tau));
}

/** Damped period T_d (s) from the undamped period T₀ (s) and decay time τ (s); inverse of undampedPeriod. */
export function dampedPeriod(T0: number, tau: number): number {
  const w0 = (2 * Math.PI) / T0;
  const wd2 = w0 * w0 - 1 / (tau * tau);
  if (!(wd2 > 0)) throw new RangeError('dampedPeriod: overdamped (1/τ ≥ ω₀), no oscillation');
  return (2 * Math.PI) / Math.sqrt(wd2);
}

/** Quality factor Q = π·τ/T₀ from decay time τ (s) and undamped period T₀ (s). */
export function qFromDecay(tau: number, T0: number): number {
  return (Math.PI * tau) / T0;
}

/** Amplitude decay time τ = Q·T₀/π (s); inverse of qFromDecay. */
export function decayFromQ(Q: number, T0: number): number {
  return (Q * T0) / Math.PI;
}

/** Torsion constant of a round fibre κ = π·G·d⁴/(32·L) (N·m/rad): G (Pa), d and L (m). */
export function kappaRound(G: number, d: number, L: number): number {
  return (Math.PI * G * d ** 4) / (32 * L);
}

/** Shear modulus G = 32·κ·L/(π·d⁴) (Pa) of a round fibre from κ (N·m/rad), d and L (m). */
export function shearModulusRound(kappa: number, d: number, L: number): number {
  return (32 * kappa * L) / (Math.PI * d ** 4);
}

/**
 * Torsion constant of a flat ribbon κ ≈ G·w·t³/(3·L) (N·m/rad), valid for
 * width w ≫ thickness t (the thin-strip limit of Saint-Venant torsion).
 */
export function kappaRibbon(G: number, w: number, t: number, L: number): number {
  return (G * w * t ** 3) / (3 * L);
}

/** Shear modulus G ≈ 3·κ·L/(w·t³) (Pa) of a thin ribbon; inverse of kappaRibbon. */
export function shearModulusRibbon(kappa: number, w: number, t: number, L: number): number {
  return (3 * kappa * L) / (w * t ** 3);
}
