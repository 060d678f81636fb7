/**
 * Test reference: noise limits of the damped-sine fit — the Cramér–Rao bound from the inverse
 * Fisher matrix, and the classic closed-form frequency bound for a tone.
 */
import { spdInverse } from '../../src/analysis/linalg.js';

/** True parameters of θ_eq + d·(t − t_mid) + A·e^(−(t − t_mid)/τ)·cos(2π(t − t_mid)/T + φ). */
export interface DampedSineTruth {
  equilibrium_rad: number;
  drift_rad_per_s: number;
  amplitude_rad: number;
  phase_rad: number;
  period_s: number;
  /** τ, s; Infinity for no damping */
  decay_time_s: number;
}

/** Cramér–Rao standard deviations, same parameter order as DAMPED_SINE_PARAMS. */
export interface FisherBound {
  equilibrium_sigma_rad: number;
  drift_sigma_rad_per_s: number;
  amplitude_sigma_rad: number;
  phase_sigma_rad: number;
  period_sigma_s: number;
  /** of the decay rate 1/τ, 1/s (finite also when τ = ∞) */
  decay_rate_sigma_per_s: number;
  /** the inverse Fisher matrix (6×6), or null when it is singular */
  covariance: number[][] | null;
}

/**
 * Cramér–Rao bound for the damped-sine model in white Gaussian noise of
 * standard deviation `sigma`: the inverse of F = JᵀJ/σ², J the model's
 * Jacobian at the true parameters (Kay, "Fundamentals of Statistical Signal
 * Processing: Estimation Theory", 1993, §3.7 — from memory).
 */
export function fisherBound(t: Float64Array, truth: DampedSineTruth, sigma: number, tMid: number): FisherBound {
  const { amplitude_rad: A, phase_rad: phi, period_s: T } = truth;
  const g = Number.isFinite(truth.decay_time_s) ? 1 / truth.decay_time_s : 0;
  const F = new Float64Array(36);
  const j = new Float64Array(6);
  for (let i = 0; i < t.length; i++) {
    const u = t[i] - tMid;
    const e = Math.exp(-g * u);
    const psi = (2 * Math.PI * u) / T + phi;
    const c = Math.cos(psi), s = Math.sin(psi);
    j[0] = 1;
    j[1] = u;
    j[2] = e * c;
    j[3] = -A * e * s;
    j[4] = (A * e * s * 2 * Math.PI * u) / (T * T);
    j[5] = -u * A * e * c;
    for (let a = 0; a < 6; a++) for (let b = 0; b <= a; b++) F[a * 6 + b] += j[a] * j[b];
  }
  for (let a = 0; a < 6; a++) for (let b = 0; b <= a; b++) { F[a * 6 + b] /= sigma * sigma; F[b * 6 + a] = F[a * 6 + b]; }
  const inv = spdInverse(F, 6);
  const sd = (k: number): number => (inv ? Math.sqrt(inv[k * 6 + k]) : Infinity);
  return {
    equilibrium_sigma_rad: sd(0), drift_sigma_rad_per_s: sd(1), amplitude_sigma_rad: sd(2),
    phase_sigma_rad: sd(3), period_sigma_s: sd(4), decay_rate_sigma_per_s: sd(5),
    covariance: inv ? Array.from({ length: 6 }, (_, a) => Array.from(inv.subarray(a * 6, a * 6 + 6))) : null,
  };
}

/**
 * Rife & Boorstyn (1974) lower bound on var(ω̂), rad²/s², for N samples
 * spaced Δt of a tone of amplitude A in white noise.
 *
 * 'complex' is their setting, a complex tone A·e^(i(ωt+φ)) with noise of
 * variance σ² in each of the real and imaginary parts:
 * var ≥ 12σ²/(A²Δt²N(N²−1)) (the form quoted in docs/physics.md).
 * 'real' (default), a real tone A·cos(ωt+φ) in real noise of variance σ²,
 * carries half the signal energy, so the bound doubles:
 * var ≥ 24σ²/(A²Δt²N(N²−1)) (Kay 1993, Example 3.14 with η = A²/(2σ²), from
 * memory; the test checks it against the Fisher matrix numerically).
 */
export function rifeBoorstynOmegaVariance(
  n: number, dt: number, amplitude: number, sigma: number, signal: 'real' | 'complex' = 'real',
): number {
  const k = signal === 'real' ? 24 : 12;
  return (k * sigma * sigma) / (amplitude * amplitude * dt * dt * n * (n * n - 1));
}

/** σ_T from σ_ω: T = 2π/ω, so σ_T = T²·σ_ω/(2π). */
export function periodSigmaFromOmega(period_s: number, omegaSigma: number): number {
  return (period_s * period_s * omegaSigma) / (2 * Math.PI);
}
