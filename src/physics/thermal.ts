/**
 * Thermal (fluctuation–dissipation) limits of a torsion pendulum
 * (docs/physics.md, "Limits to compare a measurement with"). One-sided spectral
 * densities, per hertz, as functions of frequency f in Hz.
 */
import { K_BOLTZMANN } from './constants.js';

/** What dissipates the pendulum's energy: a constant loss angle 1/Q (a fibre's internal friction) or gas (viscous). */
export type Damping = 'internal' | 'viscous';

/** Equipartition rms angle θ_rms = √(k_B·T/κ) (rad) at temperature T (K) and torsion constant κ (N·m/rad). */
export function thermalAngleRms(T: number, kappa: number): number {
  return Math.sqrt((K_BOLTZMANN * T) / kappa);
}

/** One-sided torque noise (N²·m²/Hz) for structural damping (loss angle 1/Q): S_τ = 4·k_B·T·κ/(2π·f·Q). */
export function torqueNoiseStructural(f: number, T: number, kappa: number, Q: number): number {
  return (4 * K_BOLTZMANN * T * kappa) / (2 * Math.PI * f * Q);
}

/** One-sided torque noise (N²·m²/Hz) for viscous damping b = I·ω₀/Q: S_τ = 4·k_B·T·I·ω₀/Q, white. */
export function torqueNoiseViscous(T: number, I: number, omega0: number, Q: number): number {
  return (4 * K_BOLTZMANN * T * I * omega0) / Q;
}

/** One-sided thermal torque PSD (N²·m²/Hz) at f for either damping law, with ω₀ = √(κ/I). */
export function thermalTorquePsd(f: number, T: number, I: number, kappa: number, Q: number, damping: Damping): number {
  return damping === 'internal' ? torqueNoiseStructural(f, T, kappa, Q) : torqueNoiseViscous(T, I, Math.sqrt(kappa / I), Q);
}

/**
 * |χ(f)|⁻² = |κ − I·ω² + i·D(ω)|² ((N·m/rad)²), the squared inverse response of
 * the pendulum, angle per torque: D = κ/Q for a constant loss angle, b·ω with
 * b = I·ω₀/Q for viscous damping. Torque = angle·|χ|⁻¹ spectrally.
 */
export function inverseResponseSquared(f: number, I: number, kappa: number, Q: number, damping: Damping): number {
  const w = 2 * Math.PI * f;
  const re = kappa - I * w * w;
  const im = damping === 'internal' ? kappa / Q : ((I * Math.sqrt(kappa / I)) / Q) * w;
  return re * re + im * im;
}

/**
 * One-sided angle noise PSD (rad²/Hz) of the oscillator driven by its own
 * thermal torque: S_θ = S_τ/|κ_c − I·ω²|², with κ_c = κ·(1 + i/Q) for
 * internal (structural) damping and κ − I·ω² + i·b·ω (b = I·ω₀/Q) for viscous damping.
 * The viscous form integrates over f ∈ (0, ∞) to k_B·T/κ exactly; the
 * structural form has a 1/f tail whose excess grows as ln(f₀/f_min)/Q (a
 * constant loss angle cannot hold down to f → 0), negligible in band at high Q.
 * ('structural' is the older name of 'internal'.)
 */
export function thermalAnglePsd(f: number, T: number, I: number, kappa: number, Q: number, damping: Damping | 'structural' = 'internal'): number {
  const d: Damping = damping === 'structural' ? 'internal' : damping;
  return thermalTorquePsd(f, T, I, kappa, Q, d) / inverseResponseSquared(f, I, kappa, Q, d);
}
