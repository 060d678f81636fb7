/**
 * The virtual torsion balance: I·θ̈ + b·θ̇ + κ(t)·(θ − θ_eq(t)) = τ_thermal(t),
 * advanced sample by sample with the exact discrete-time solution of the
 * linear oscillator (state-transition matrix over Δt, recomputed whenever κ
 * changes) and thermal torque noise with the exact discrete covariance, so
 * the stationary angle variance is k_B·T/κ.
 *
 * Modelling choices, stated once:
 * - damping is viscous, b = I·ω₀/Q (the viscous equivalent of the fibre's
 *   structural loss at ω₀); the noise is white to match it;
 * - the state is y = θ − θ_eq: the slow equilibrium (creep, twists) is added
 *   afterwards, so the pendulum follows it quasi-statically. The neglected lag
 *   is of order θ̈_eq/ω₀², negligible for creep over minutes to days;
 * - a disturbance acts at the first sample at or after its time.
 */
import { K_BOLTZMANN } from '../../src/physics/constants.js';
import { Rng } from '../../src/analysis/rng.js';
import type { Scenario } from './scenario.js';

/** Discrete propagator of the damped oscillator over one step h: y' = Φ·y + L·(n₁, n₂). */
export interface Propagator {
  /** state-transition matrix, row major [Φ11, Φ12, Φ21, Φ22] */
  phi: Float64Array;
  /** lower Cholesky factor of the step noise covariance [L11, L21, L22] */
  chol: Float64Array;
  /** the step noise covariance [Q11, Q12, Q22] */
  cov: Float64Array;
  omega0: number;
  gamma: number;
}

/**
 * Exact propagator for y'' + 2γy' + ω₀²y = w(t) over h, with w white of
 * two-sided intensity 4γ·k_B·T/I (fluctuation–dissipation for b = 2γI);
 * `kT` = 0 gives no noise. Requires γ < ω₀ (underdamped).
 */
export function propagator(I: number, kappa: number, q: number, h: number, kT: number): Propagator {
  const w0 = Math.sqrt(kappa / I);
  const g = w0 / (2 * q);
  const wd = Math.sqrt(w0 * w0 - g * g);
  const e = Math.exp(-g * h);
  const c = Math.cos(wd * h);
  const s = Math.sin(wd * h);
  const phi = new Float64Array([e * (c + (g / wd) * s), (e * s) / wd, (-e * w0 * w0 * s) / wd, e * (c - (g / wd) * s)]);
  // Q = q_c ∫₀ʰ Φ(s)·[0 1]ᵀ[0 1]·Φ(s)ᵀ ds in closed form; the integrals are
  // written so nothing cancels worse than (ω_d·h)², and by power series at high
  // sample rates where even that would lose digits.
  const qc = (4 * g * kT) / I;
  const cov = new Float64Array(3);
  const chol = new Float64Array(3);
  if (qc > 0) {
    let J0: number, Jc: number, Js: number, D: number;
    if (wd * h < 1e-2 && g * h < 1e-2) {
      // high sample rate: the closed forms below would cancel; use the power series instead
      J0 = seriesIntegral(-2 * g, 2 * wd, h, 'one');
      Jc = seriesIntegral(-2 * g, 2 * wd, h, 'cos');
      Js = seriesIntegral(-2 * g, 2 * wd, h, 'sin');
      D = seriesIntegral(-2 * g, 2 * wd, h, 'oneMinusCos');
    } else {
      J0 = g > 0 ? -Math.expm1(-2 * g * h) / (2 * g) : h; // ∫ e^{−2γs}
      const e2 = e * e;
      const den = 4 * g * g + 4 * wd * wd;
      const c2 = Math.cos(2 * wd * h);
      const s2 = Math.sin(2 * wd * h);
      Jc = (e2 * (-2 * g * c2 + 2 * wd * s2) + 2 * g) / den; // ∫ e^{−2γs} cos 2ω_d s
      Js = (e2 * (-2 * g * s2 - 2 * wd * c2) + 2 * wd) / den; // ∫ e^{−2γs} sin 2ω_d s
      D = J0 - Jc; // ∫ e^{−2γs}·2 sin²(ω_d s); cancels only as (ω_d h)² ≥ 1e-4
    }
    const r = g / wd;
    const pp = D / (2 * wd * wd);
    const pr = (Js / 2 - (r * D) / 2) / wd;
    const rr = (J0 + Jc) / 2 - r * Js + (r * r * D) / 2;
    cov[0] = qc * pp;
    cov[1] = qc * pr;
    cov[2] = qc * rr;
    chol[0] = Math.sqrt(cov[0]);
    chol[1] = chol[0] > 0 ? cov[1] / chol[0] : 0;
    chol[2] = Math.sqrt(Math.max(0, cov[2] - chol[1] * chol[1]));
  }
  return { phi, chol, cov, omega0: w0, gamma: g };
}

/**
 * ∫₀ʰ e^{a·s}·f(ω·s) ds for f = 1, cos, sin or 1 − cos, by multiplying the
 * two power series and integrating term by term (for |a|h, ωh ≤ 1e-2 the
 * 14 terms kept are exact to double precision).
 */
function seriesIntegral(a: number, w: number, h: number, f: 'one' | 'cos' | 'sin' | 'oneMinusCos'): number {
  const N = 14;
  const ex = new Float64Array(N); // coefficients of e^{as}
  const tr = new Float64Array(N); // coefficients of f(ωs)
  ex[0] = 1;
  for (let k = 1; k < N; k++) ex[k] = (ex[k - 1] * a) / k;
  let fk = 1; // ω^k/k!
  for (let k = 0; k < N; k++) {
    if (k > 0) fk = (fk * w) / k;
    const sgn = (Math.floor(k / 2) % 2 === 0 ? 1 : -1);
    if (f === 'one') tr[k] = k === 0 ? 1 : 0;
    else if (f === 'sin') tr[k] = k % 2 === 1 ? sgn * fk : 0;
    else if (f === 'cos') tr[k] = k % 2 === 0 ? sgn * fk : 0;
    else tr[k] = k % 2 === 0 && k > 0 ? -sgn * fk : 0;
  }
  let sum = 0;
  // sum from the highest power down, for accuracy
  for (let k = N - 1; k >= 0; k--) {
    let c = 0;
    for (let j = 0; j <= k; j++) c += ex[j] * tr[k - j];
    sum += (c * h ** (k + 1)) / (k + 1);
  }
  return sum;
}

/** Output of one block of simulated samples. */
export interface BalanceBlock {
  /** sample times, s since the run's start */
  t: Float64Array;
  /** true angle, rad */
  theta: Float64Array;
  /** equilibrium angle, rad */
  thetaEq: Float64Array;
  /** pendulum temperature, K */
  temperature_K: Float64Array;
}

/** Advances one scenario's balance sample by sample; deterministic for a seed. */
export class Balance {
  readonly h: number;
  private k = 0; // index of the next sample
  private y = 0; // θ − θ_eq, rad
  private v = 0; // dθ/dt, rad/s
  private prop!: Propagator;
  private propKappa = NaN;
  private eqStep = 0; // accumulated equilibrium steps (twists), rad
  private nextDist = 0;
  private readonly dist: Scenario['disturbances'];
  private readonly creeps: { a: number; tc: number; start: number }[] = [];
  private readonly steps: { t: number; f: number }[];
  private readonly kT: number;
  private readonly n1 = new Float64Array(2);

  constructor(readonly sc: Scenario, readonly rng: Rng) {
    this.h = 1 / sc.sample_rate_Hz;
    this.kT = sc.thermal_noise ? K_BOLTZMANN * sc.temperature_K : 0;
    this.dist = [...sc.disturbances].sort((a, b) => a.t_s - b.t_s);
    if (sc.creep) this.creeps.push({ a: sc.creep.a_rad, tc: sc.creep.tc_s, start: sc.creep.start_s });
    this.steps = [...sc.period_steps].sort((a, b) => a.t_s - b.t_s).map((p) => ({ t: p.t_s, f: 1 / (1 + p.ppm * 1e-6) ** 2 }));
    // initial state: the given swing θ − θ_eq = A·cos φ at t = 0 of A·e^{−t/τ}·cos(ω_d t + φ),
    // plus a draw from the thermal equilibrium distribution
    const k0 = this.kappaAt(0);
    const w0 = Math.sqrt(k0 / sc.I);
    const g = w0 / (2 * sc.q);
    const wd = Math.sqrt(w0 * w0 - g * g);
    const A = sc.initial.amplitude_rad;
    const ph = sc.initial.phase_rad;
    this.y = A * Math.cos(ph);
    this.v = -A * (g * Math.cos(ph) + wd * Math.sin(ph));
    if (this.kT > 0) {
      this.y += Math.sqrt(this.kT / k0) * rng.normal();
      this.v += Math.sqrt(this.kT / sc.I) * rng.normal();
    }
  }

  /** Temperature of the pendulum at time t, K. */
  temperatureAt(t: number): number {
    const sw = this.sc.temperature_swing;
    if (!sw) return this.sc.temperature_K;
    return this.sc.temperature_K + sw.amplitude_K * Math.sin((2 * Math.PI * t) / sw.period_s + sw.phase_rad);
  }

  /** Torsion constant at time t, N·m/rad: temperature and period steps applied. */
  kappaAt(t: number): number {
    let f = 1;
    const sw = this.sc.temperature_swing;
    if (sw) {
      const dT = this.temperatureAt(t) - this.sc.temperature_K;
      // T ∝ (1 + p·ΔT) ⇒ κ ∝ (1 + p·ΔT)⁻²; else κ ∝ G ∝ (1 + (dG/dT/G)·ΔT)
      f *= sw.period_coefficient_per_K !== undefined ? 1 / (1 + sw.period_coefficient_per_K * dT) ** 2 : 1 + this.sc.dGdT_per_K * dT;
    }
    for (const s of this.steps) {
      if (s.t > t) break;
      f *= s.f;
    }
    return this.sc.kappa * f;
  }

  /** Equilibrium angle at time t, rad (initial + twists so far + logarithmic creep terms). */
  private equilibriumAt(t: number): number {
    let e = this.sc.initial.equilibrium_rad + this.eqStep;
    for (const c of this.creeps) if (t > c.start) e += c.a * Math.log1p((t - c.start) / c.tc);
    return e;
  }

  /** Simulate the next n samples into fresh arrays. */
  next(n: number): BalanceBlock {
    const out: BalanceBlock = { t: new Float64Array(n), theta: new Float64Array(n), thetaEq: new Float64Array(n), temperature_K: new Float64Array(n) };
    const sc = this.sc;
    const n1 = this.n1;
    for (let i = 0; i < n; i++, this.k++) {
      const t = this.k / this.sc.sample_rate_Hz; // k/fs, not k·h: exact decimal times where possible
      // disturbances due at or before this sample
      while (this.nextDist < this.dist.length && this.dist[this.nextDist].t_s <= t) {
        const d = this.dist[this.nextDist++];
        const w0 = Math.sqrt(this.kappaAt(t) / sc.I);
        if (d.kick_rad !== undefined) this.v += d.kick_rad * w0;
        if (d.twist_turns !== undefined) this.eqStep += 2 * Math.PI * d.twist_turns;
        if (d.creep) this.creeps.push({ a: d.creep.a_rad, tc: d.creep.tc_s, start: d.t_s });
      }
      const eq = this.equilibriumAt(t);
      out.t[i] = t;
      out.theta[i] = eq + this.y;
      out.thetaEq[i] = eq;
      out.temperature_K[i] = this.temperatureAt(t);
      // advance y over [t, t + h] with κ at the step's middle; rebuild Φ only when κ
      // has moved by more than 1e-10 relative (5e-11 in period)
      const kap = this.kappaAt(t + this.h / 2);
      if (!(Math.abs(kap - this.propKappa) <= 1e-10 * kap)) {
        this.prop = propagator(sc.I, kap, sc.q, this.h, this.kT);
        this.propKappa = kap;
      }
      const p = this.prop.phi;
      const y = p[0] * this.y + p[1] * this.v;
      const v = p[2] * this.y + p[3] * this.v;
      if (this.kT > 0) {
        n1[0] = this.rng.normal();
        n1[1] = this.rng.normal();
        const L = this.prop.chol;
        this.y = y + L[0] * n1[0];
        this.v = v + L[1] * n1[0] + L[2] * n1[1];
      } else {
        this.y = y;
        this.v = v;
      }
    }
    return out;
  }

  /** Index of the next sample to be simulated. */
  get index(): number {
    return this.k;
  }
}
