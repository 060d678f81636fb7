/**
 * The virtual torsion balance: I·θ̈ + b·θ̇ + κ(t)·(θ − θ_eq(t)) = τ_thermal(t),
 * advanced sample by sample with the exact discrete-time solution of the
 * linear oscillator (state-transition matrix over Δt, recomputed whenever κ
 * changes).
 *
 * Modelling choices, stated once:
 * - the mechanics is a linear oscillator I·ÿ + b·ẏ + κ'·y for either damping
 *   law. Viscous: b = I·ω₀/Q, κ' = κ. Internal: the free motion is that of the
 *   complex stiffness κ·(1 + i/Q), e^(i(ω_d + iγ)t) with ω_d + iγ = ω₀·√(1 + i/Q)
 *   (so ω₀² = ω_d² − γ², as src/physics/torsion.ts inverts it, and γ ≈ ω₀/(2Q)),
 *   which the oscillator with κ' = κ·√(1 + 1/Q²) and b = 2·I·γ has exactly
 *   (lossAngleOscillator). Its response differs from the loss angle's
 *   |κ(1 + i/Q) − I·ω²|⁻¹ (i·b·ω for i·κ/Q) by less than 1/(2Q) in |χ|² at any
 *   frequency;
 * - `damping: 'viscous'`: white thermal torque 4·k_B·T·I·ω₀/Q (one-sided),
 *   added with the exact discrete covariance of the state over a step, so the
 *   stationary angle variance is k_B·T/κ;
 * - `damping: 'internal'` (loss angle 1/Q, the usual case of a fibre): the
 *   thermal torque has the fluctuation–dissipation spectrum
 *   S_τ(f) = 4·k_B·T·κ/(2π·f·Q), equal to the viscous one at f₀. It is a sum
 *   of Ornstein–Uhlenbeck processes with rates λ_k two per decade, from
 *   2/Δt down to below 0.1/duration (internalTorqueRates), each of variance
 *   S·f·ln(10)/2: a log-uniform sum of Lorentzians 4σ²λ/(λ² + ω²) is 1/f, and
 *   at two per decade its ripple is ±0.08 % (its cost: one normal deviate per
 *   component and sample, 15–20 components). Each is advanced exactly per
 *   sample (u ← e^{−λΔt}·u + √(1 − e^{−2λΔt})·n); their sum is held over the
 *   step and enters through the exact propagator's input response
 *   Γ = [(1 − Φ₁₁)/κ, Φ₁₂/I]. The held sequence's spectrum is 1/f within 1 %
 *   from 40·λ_min/(2π) (below 0.64/duration) up to a tenth of the sample rate
 *   (the top rate, 2/Δt, is chosen so that its sampled spectrum makes up for
 *   the rates left out above it; test/drivers/simulator-internal.test.ts
 *   checks the spectrum); below that it flattens, so the angle variance stays
 *   finite: k_B·T/κ plus the 1/f share, about (2/(π·Q))·ln(f₀·duration)·k_B·T/κ.
 *   The held torque reaches the pendulum low by sinc²(π·f/f_s), 0.1 % at
 *   f_s/50 and 1e-5 at the demo's f_s/600;
 * - the state is y = θ − θ_eq: the slow equilibrium (creep, twists) is added
 *   afterwards, so the pendulum follows it quasi-statically. The neglected lag
 *   is of order θ̈_eq/ω₀², negligible for creep over minutes to days;
 * - a disturbance acts at the first sample at or after its time;
 * - configurations (scenario `configurations`): each state puts a steady torque
 *   τ on the pendulum, so the equilibrium sits τ/κ away (κ the scenario's
 *   reference κ, so the truth is exact), and scales κ for its `period_ppm`; at a
 *   switch the equilibrium steps and the angle stays continuous (y − Δ), which
 *   is exactly a step torque's effect on a linear oscillator: the swing about the
 *   new equilibrium gains up to Δ. The state takes effect at the first sample at
 *   or after the switch, the sample whose `state` channel shows it;
 * - anelastic fibre (scenario `anelastic`): κ is scaled by (1 + s·A/T_ref)⁻², so
 *   the period grows by s·A (s in s/rad), A the swing's amplitude now:
 *   √(y² + ((v + γ·y)/ω_d)²), which is exactly A·e^(−γt) for the free motion
 *   A·e^(−γt)·cos(ω_d·t + φ) (a smoothed amplitude would lag it, and bias the
 *   slope a fit finds by the lag over the decay time: 0.3 % at T/τ = 0.003);
 * - `drift`: θ_eq also moves by rate·t + quadratic·t².
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
  /** response [Δy, Δv] to a unit torque (1 N·m) held over the step, from rest */
  input: Float64Array;
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
  // Γ = ∫₀ʰ Φ(s)·[0, 1/I]ᵀ ds = [(1 − Φ₁₁)/κ, Φ₁₂/I]; 1 − Φ₁₁ written without the
  // 1 − cos cancellation, since it is of order (ω₀h)² at high sample rates
  const sh = Math.sin((wd * h) / 2);
  const oneMinusPhi11 = -Math.expm1(-g * h) + e * 2 * sh * sh - e * (g / wd) * s;
  const input = new Float64Array([oneMinusPhi11 / kappa, phi[1] / I]);
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
  return { phi, chol, cov, input, omega0: w0, gamma: g };
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

/**
 * The oscillator (stiffness κ' in N·m/rad and its Q' = √(κ'/I)/(2γ)) whose free motion is that of
 * the complex stiffness κ·(1 + i/Q): ω_d + iγ = ω₀·√(1 + i/Q), ω₀ = √(κ/I).
 */
export function lossAngleOscillator(I: number, kappa: number, q: number): { kappa: number; q: number } {
  const phi = 1 / q;
  const r = Math.sqrt(1 + phi * phi);
  const a = Math.sqrt((r + 1) / 2); // Re √(1 + iφ)
  const b = phi / (2 * a); // Im √(1 + iφ), from 2ab = φ without cancellation
  const w0 = Math.sqrt(kappa / I);
  const k = kappa * r; // I·(ω_d² + γ²) = I·ω₀²·(a² + b²)
  return { kappa: k, q: Math.sqrt(k / I) / (2 * w0 * b) };
}

/** Rates λ_k of the internal-damping torque's OU components are this factor apart (two per decade). */
export const INTERNAL_RATE_RATIO = Math.sqrt(10);

/**
 * Rates λ_k (1/s) of the Ornstein–Uhlenbeck components whose sum is the
 * internal-damping thermal torque: 2·sample rate, then down by √10 each,
 * ending at the first rate ≤ 0.1/duration. Each component's variance is
 * S_τ(f)·f·ln(√10), with S_τ(f)·f = 4·k_B·T·κ/(2π·Q) the constant of the 1/f law.
 */
export function internalTorqueRates(duration_s: number, sampleRate_Hz: number): Float64Array {
  const out: number[] = [];
  const floor = 0.1 / duration_s;
  for (let lam = 2 * sampleRate_Hz; ; lam /= INTERNAL_RATE_RATIO) {
    out.push(lam);
    if (lam <= floor) break;
  }
  return Float64Array.from(out);
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
  /** thermal torque held over each sample's step, N·m (internal damping with thermal noise only) */
  torque_Nm?: Float64Array;
  /** the configuration's state at each sample (scenarios with configurations only) */
  state?: Float64Array;
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
  // internal damping: OU components of the torque (unit variance), their step decay and drive
  private readonly internal: boolean;
  private readonly ou: Float64Array;
  private readonly ouDecay: Float64Array;
  private readonly ouDrive: Float64Array;
  private torqueScale = 0; // √(variance of one component), N·m, at the propagator's κ
  // configurations: the state in force (index into sc.configurations.states) and the schedule's switch times
  private readonly switchT: Float64Array;
  private readonly switchIdx: Int32Array;
  private stateIdx = -1;
  // anelastic fibre: the swing's amplitude, rad, and the reference period, s
  private ampEnv = 0;
  private readonly tRef: number;

  constructor(readonly sc: Scenario, readonly rng: Rng) {
    this.h = 1 / sc.sample_rate_Hz;
    this.kT = sc.thermal_noise ? K_BOLTZMANN * sc.temperature_K : 0;
    this.dist = [...sc.disturbances].sort((a, b) => a.t_s - b.t_s);
    if (sc.creep) this.creeps.push({ a: sc.creep.a_rad, tc: sc.creep.tc_s, start: sc.creep.start_s });
    this.steps = [...sc.period_steps].sort((a, b) => a.t_s - b.t_s).map((p) => ({ t: p.t_s, f: 1 / (1 + p.ppm * 1e-6) ** 2 }));
    const cf = sc.configurations;
    const sched = cf?.schedule ?? [];
    this.switchT = Float64Array.from(sched, (e) => e.t_s);
    this.switchIdx = Int32Array.from(sched, (e) => cf!.states.findIndex((st) => st.state === e.state));
    this.tRef = 2 * Math.PI * Math.sqrt(sc.I / sc.kappa);
    // initial state: the given swing θ − θ_eq = A·cos φ at t = 0 of A·e^{−t/τ}·cos(ω_d t + φ),
    // plus a draw from the thermal equilibrium distribution
    const k0 = this.kappaAt(0);
    const m0 = this.mechanics(k0);
    const w0 = Math.sqrt(m0.kappa / sc.I);
    const g = w0 / (2 * m0.q);
    const wd = Math.sqrt(w0 * w0 - g * g);
    const A = sc.initial.amplitude_rad;
    const ph = sc.initial.phase_rad;
    this.y = A * Math.cos(ph);
    this.v = -A * (g * Math.cos(ph) + wd * Math.sin(ph));
    this.ampEnv = A;
    if (this.kT > 0) {
      this.y += Math.sqrt(this.kT / k0) * rng.normal();
      this.v += Math.sqrt(this.kT / sc.I) * rng.normal();
    }
    this.internal = sc.damping === 'internal' && this.kT > 0;
    const rates = this.internal ? internalTorqueRates(sc.duration_s, sc.sample_rate_Hz) : new Float64Array(0);
    this.ou = new Float64Array(rates.length);
    this.ouDecay = new Float64Array(rates.length);
    this.ouDrive = new Float64Array(rates.length);
    for (let j = 0; j < rates.length; j++) {
      // drawn from their stationary distribution, so the torque is stationary from the start
      this.ou[j] = rng.normal();
      this.ouDecay[j] = Math.exp(-rates[j] * this.h);
      this.ouDrive[j] = Math.sqrt(-Math.expm1(-2 * rates[j] * this.h));
    }
  }

  /** The oscillator's stiffness and Q for the fibre's κ: itself for viscous damping, lossAngleOscillator for internal. */
  private mechanics(kappa: number): { kappa: number; q: number } {
    return this.sc.damping === 'internal' ? lossAngleOscillator(this.sc.I, kappa, this.sc.q) : { kappa, q: this.sc.q };
  }

  /** Temperature of the pendulum at time t, K. */
  temperatureAt(t: number): number {
    const sw = this.sc.temperature_swing;
    if (!sw) return this.sc.temperature_K;
    return this.sc.temperature_K + sw.amplitude_K * Math.sin((2 * Math.PI * t) / sw.period_s + sw.phase_rad);
  }

  /** Index (into scenario.configurations.states) of the state in force at time t; −1 without configurations. */
  stateIndexAt(t: number): number {
    const cf = this.sc.configurations;
    if (!cf) return -1;
    if (cf.every_s !== undefined) return Math.floor(Math.max(t, 0) / cf.every_s) % cf.states.length;
    // the last scheduled switch at or before t (binary search); the first state before any
    let lo = 0, hi = this.switchT.length;
    while (lo < hi) {
      const mid = (lo + hi) >> 1;
      if (this.switchT[mid] <= t) lo = mid + 1;
      else hi = mid;
    }
    return lo === 0 ? 0 : this.switchIdx[lo - 1];
  }

  /** Torsion constant at time t, N·m/rad: temperature, period steps and the configuration's period applied. */
  kappaAt(t: number): number {
    let f = 1;
    const si = this.stateIndexAt(t);
    if (si >= 0) f /= (1 + this.sc.configurations!.states[si].period_ppm * 1e-6) ** 2;
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

  /** Equilibrium angle at time t, rad (initial + twists so far + logarithmic creep terms + polynomial drift + the configuration's deflection). */
  private equilibriumAt(t: number): number {
    let e = this.sc.initial.equilibrium_rad + this.eqStep;
    for (const c of this.creeps) if (t > c.start) e += c.a * Math.log1p((t - c.start) / c.tc);
    const d = this.sc.drift;
    if (d) e += d.rate_rad_per_s * t + d.quadratic_rad_per_s2 * t * t;
    return e + this.deflection(this.stateIndexAt(t));
  }

  /** The configuration's deflection τ/κ, rad (κ the scenario's reference). */
  private deflection(si: number): number {
    return si < 0 ? 0 : this.sc.configurations!.states[si].torque_Nm / this.sc.kappa;
  }

  /** Simulate the next n samples into fresh arrays. */
  next(n: number): BalanceBlock {
    const out: BalanceBlock = { t: new Float64Array(n), theta: new Float64Array(n), thetaEq: new Float64Array(n), temperature_K: new Float64Array(n) };
    const sc = this.sc;
    const n1 = this.n1;
    const torque = this.internal ? (out.torque_Nm = new Float64Array(n)) : undefined;
    const states = sc.configurations ? (out.state = new Float64Array(n)) : undefined;
    const slope = sc.anelastic?.period_amplitude_slope_s_per_rad ?? 0;
    const ou = this.ou, decay = this.ouDecay, drive = this.ouDrive;
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
      if (states) {
        // a switch: the equilibrium steps, the angle does not (a step torque on a linear oscillator)
        const si = this.stateIndexAt(t);
        if (si !== this.stateIdx) {
          if (this.stateIdx >= 0) this.y -= this.deflection(si) - this.deflection(this.stateIdx);
          this.stateIdx = si;
        }
        states[i] = sc.configurations!.states[si].state;
      }
      const eq = this.equilibriumAt(t);
      out.t[i] = t;
      out.theta[i] = eq + this.y;
      out.thetaEq[i] = eq;
      out.temperature_K[i] = this.temperatureAt(t);
      // advance y over [t, t + h] with κ at the step's middle; rebuild Φ only when κ
      // has moved by more than 1e-10 relative (5e-11 in period)
      // anelastic: the period grows by slope × the smoothed amplitude
      const kap = this.kappaAt(t + this.h / 2) * (slope !== 0 ? 1 / (1 + (slope * this.ampEnv) / this.tRef) ** 2 : 1);
      if (!(Math.abs(kap - this.propKappa) <= 1e-10 * kap)) {
        // internal damping: no white torque; the coloured one enters through `input`
        const m = this.mechanics(kap);
        this.prop = propagator(sc.I, m.kappa, m.q, this.h, this.internal ? 0 : this.kT);
        this.propKappa = kap;
        if (this.internal) this.torqueScale = Math.sqrt((4 * this.kT * kap * Math.log(INTERNAL_RATE_RATIO)) / (2 * Math.PI * sc.q));
      }
      const p = this.prop.phi;
      let y = p[0] * this.y + p[1] * this.v;
      let v = p[2] * this.y + p[3] * this.v;
      if (torque) {
        let sum = 0;
        for (let j = 0; j < ou.length; j++) sum += ou[j];
        const tq = this.torqueScale * sum;
        torque[i] = tq;
        y += this.prop.input[0] * tq;
        v += this.prop.input[1] * tq;
        for (let j = 0; j < ou.length; j++) ou[j] = decay[j] * ou[j] + drive[j] * this.rng.normal();
        this.y = y;
        this.v = v;
      } else if (this.kT > 0) {
        n1[0] = this.rng.normal();
        n1[1] = this.rng.normal();
        const L = this.prop.chol;
        this.y = y + L[0] * n1[0];
        this.v = v + L[1] * n1[0] + L[2] * n1[1];
      } else {
        this.y = y;
        this.v = v;
      }
      if (slope !== 0) {
        const g = this.prop.gamma, wd = Math.sqrt(this.prop.omega0 ** 2 - g * g);
        this.ampEnv = Math.sqrt(this.y * this.y + ((this.v + g * this.y) / wd) ** 2);
      }
    }
    return out;
  }

  /** Index of the next sample to be simulated. */
  get index(): number {
    return this.k;
  }
}
