/**
 * Torsion-pendulum and torsion-fibre relations (docs/physics.md, "The damped oscillator"
 * and "Fibres"). Pure functions, SI units.
 */

import type { Damping } from './thermal.js';

/** Torsion constant κ = 4π²·I/T₀² (N·m/rad) from inertia I (kg·m²) and undamped period T₀ (s). */
export function kappaFromPeriod(I: number, T0: number): number {
  return (4 * Math.PI * Math.PI * I) / (T0 * T0);
}

/** Undamped period T₀ = 2π·√(I/κ) (s) from inertia I (kg·m²) and torsion constant κ (N·m/rad). */
export function periodFromKappa(I: number, kappa: number): number {
  return 2 * Math.PI * Math.sqrt(I / kappa);
}

/**
 * Undamped period T₀ (s) from the damped period T_d (s) and the amplitude decay time τ (s).
 * viscous: ω₀² = ω_d² + 1/τ²; internal (constant loss angle, complex stiffness): the free
 * oscillation goes as e^(i(ω_d + i/τ)t) with (ω_d + i/τ)² = ω₀²·(1 + iφ), so ω₀² = ω_d² − 1/τ²
 * exactly (T₀ ≈ T_d·(1 + 1/(8Q²))). docs/physics.md, "Damping in fibres".
 */
export function undampedPeriod(Td: number, tau: number, damping: Damping = 'viscous'): number {
  const wd = (2 * Math.PI) / Td;
  const g2 = 1 / (tau * tau);
  const w02 = damping === 'internal' ? wd * wd - g2 : wd * wd + g2;
  if (!(w02 > 0)) throw new RangeError('undampedPeriod: decay too fast for a loss angle (1/τ ≥ ω_d)');
  return (2 * Math.PI) / Math.sqrt(w02);
}

/** Damped period T_d (s) from the undamped period T₀ (s) and decay time τ (s); inverse of undampedPeriod. */
export function dampedPeriod(T0: number, tau: number, damping: Damping = 'viscous'): number {
  const w0 = (2 * Math.PI) / T0;
  const g2 = 1 / (tau * tau);
  const wd2 = damping === 'internal' ? w0 * w0 + g2 : w0 * w0 - g2;
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

/** Torsion constant that a tensile force F (N) adds to a fibre: F·(J/A)/L, with J/A the cross-section's polar moment over its area (m²). */
export function tensionKappa(F: number, polarOverArea_m2: number, L: number): number {
  return (F * polarOverArea_m2) / L;
}

/** J/A of a round section, d²/8 (m²). */
export const roundPolarOverArea = (d: number): number => (d * d) / 8;

/** J/A of a rectangular section w × t, (w² + t²)/12 (m²). */
export const rectPolarOverArea = (w: number, t: number): number => (w * w + t * t) / 12;

/**
 * Torsion constant of a round fibre under tension F (N): κ = (π·G·d⁴/32 + F·d²/8)/L (N·m/rad);
 * G (Pa), d and L (m). F defaults to 0 (the elastic term alone).
 */
export function kappaRound(G: number, d: number, L: number, F = 0): number {
  return (Math.PI * G * d ** 4) / (32 * L) + tensionKappa(F, roundPolarOverArea(d), L);
}

/** Shear modulus G = 32·(κ·L − F·d²/8)/(π·d⁴) (Pa) of a round fibre from κ (N·m/rad), d, L (m) and tension F (N); inverse of kappaRound. */
export function shearModulusRound(kappa: number, d: number, L: number, F = 0): number {
  return (32 * (kappa * L - F * roundPolarOverArea(d))) / (Math.PI * d ** 4);
}

// odd terms of the Saint-Venant series kept: the n-th adds about 1/n⁵, so 1e-10 by n = 99
const SERIES_TERMS = 50;

/**
 * Saint-Venant shape factor β of a rectangular section with sides ratio r = long/short ≥ 1, in
 * κ = β·G·b·a³/L (a the short side, b the long one):
 * β = (1/3)·[1 − (192/π⁵)·(1/r)·Σ_{n odd} tanh(n·π·r/2)/n⁵], β → (1/3)·(1 − 0.630/r) for r ≫ 1
 * (Timoshenko & Goodier, Theory of Elasticity, "Torsion of a bar of rectangular cross section").
 */
export function rectangleTorsionFactor(r: number): number {
  if (!(r >= 1)) throw new RangeError('rectangleTorsionFactor: the ratio long/short must be ≥ 1');
  let sum = 0;
  for (let k = 0; k < SERIES_TERMS; k++) {
    const n = 2 * k + 1;
    sum += Math.tanh((n * Math.PI * r) / 2) / n ** 5;
  }
  return (1 - (192 / Math.PI ** 5) * sum / r) / 3;
}

/** β·b·a³ of a ribbon w × t (m⁴): the section's torsion constant over G, with a = min(w, t), b = max(w, t). */
function ribbonSection(w: number, t: number): number {
  const a = Math.min(w, t), b = Math.max(w, t);
  return rectangleTorsionFactor(b / a) * b * a ** 3;
}

/**
 * Torsion constant of a flat ribbon under tension F (N):
 * κ = β(w/t)·G·w·t³/L + F·(w² + t²)/(12·L) (N·m/rad), β the Saint-Venant factor
 * (→ 1/3 for w ≫ t, 0.141 for a square).
 */
export function kappaRibbon(G: number, w: number, t: number, L: number, F = 0): number {
  return (G * ribbonSection(w, t)) / L + tensionKappa(F, rectPolarOverArea(w, t), L);
}

/** Shear modulus G = (κ·L − F·(w² + t²)/12)/(β·w·t³) (Pa) of a ribbon; inverse of kappaRibbon. */
export function shearModulusRibbon(kappa: number, w: number, t: number, L: number, F = 0): number {
  return (kappa * L - F * rectPolarOverArea(w, t)) / ribbonSection(w, t);
}
