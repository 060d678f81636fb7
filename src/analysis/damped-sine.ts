/**
 * Damped-sine fit of one window (docs/commands.md "The fitted model"):
 *
 *   θ(t) = θ_eq + d·(t − t_mid) + A·exp(−(t − t_mid)/τ)·cos(2π(t − t_mid)/T + φ)
 *
 * Internally every parameter is of order one, so one Levenberg–Marquardt
 * step treats them alike: time is u = (t − t_mid)/T_s (T_s the seed period),
 * the angle is z = (θ − y0)/S (y0 the seed level, S the seed amplitude), and
 *
 *   z(u) = q0 + q1·u + e^(−r·u)·(q2·cos 2πνu + q3·sin 2πνu)
 *
 * with ν = T_s/T (≈ 1) and r = T_s/τ the decay rate per seed period. The
 * rate, not τ, is fitted so that "no visible decay" is r ≈ 0 (τ → ∞) without
 * a singularity; r may wander slightly negative in noise and is only
 * rejected when it is significantly negative (amplitude growing, r < −3σ).
 * The oscillation is (q2, q3) = (A·cos φ, −A·sin φ)/S rather than (A, φ):
 * the model is then linear in them, there is no phase singularity at small
 * A, and A, φ and their covariance follow by exact error propagation.
 *
 * The loop is a compact Levenberg–Marquardt written for this fixed
 * 6-parameter model (ml-levenberg-marquardt builds a 6×n Jacobian matrix and
 * per-sample arrays each step, about 10× slower): each iteration is one pass
 * over the samples that evaluates residual and analytic Jacobian at the trial
 * point and accumulates the 6×6 normal equations; no per-sample allocation.
 * A test cross-checks it against ml-levenberg-marquardt through `fitLM`.
 *
 * Uncertainties: covariance s²·(JᵀWJ)⁻¹ with s² = Σw·r²/(n − 6), the usual
 * least-squares estimate when the noise level is not known a priori. chi2_red
 * compares s² with a noise level found independently of the model (see
 * `noiseSigma`), so it shows model misfit rather than being 1 by construction.
 */
import type { WindowResult } from '../domain/window-result.js';
import { FIT_STATUS, type FitStatus } from './fit-status.js';
import { choleskyInPlace, choleskySolve, spdInverse } from './linalg.js';
import { periodSeed } from './period-seed.js';
import { noiseFromDifferences } from './difference-noise.js';

/** Order of the physical parameters in `covariance`. */
export const DAMPED_SINE_PARAMS = [
  'equilibrium_rad', 'drift_rad_per_s', 'amplitude_rad', 'phase_rad', 'period_s', 'decay_rate_per_s',
] as const;

/** The starting point of a fit: what `periodSeed` returns (only these fields are read). */
export interface DampedSineSeed {
  period_s: number;
  amplitude: number;
  phase_rad: number;
  equilibrium: number;
  /** default 0 */
  drift_per_s?: number;
  /** time the seed's phase and equilibrium refer to, s (default the fit's tMid) */
  tMid?: number;
}

/** Options of `fitDampedSine`. */
export interface DampedSineOptions {
  /** nonzero = exclude that sample (default: none) */
  mask?: Uint8Array;
  /** relative inverse-variance weight of each sample, ≥ 0 (default all 1) */
  weights?: Float64Array;
  /** start values (default: `periodSeed` on the same samples) */
  seed?: DampedSineSeed;
  /** reference time t_mid, s (default middle of the first and last sample) */
  tMid?: number;
  /** least number of periods the window must span (default 1.5) */
  minPeriods?: number;
  /** amplitude below which the oscillation counts as absent, rad (default 0) */
  noiseFloor?: number;
  /** apply judgeOscillation here (default true); false leaves it to a caller that widens the σ's first */
  judge?: boolean;
  /** known white-noise standard deviation per sample, rad, for chi2_red (default: estimated from high-order differences of the data) */
  noiseSigma?: number;
  /** shortest accepted period, s (default 3 sample intervals) */
  minPeriod_s?: number;
  /** longest accepted period, s (default window span / minPeriods) */
  maxPeriod_s?: number;
  /** iteration limit (default 60) */
  maxIterations?: number;
  /** least number of usable samples (default 20) */
  minSamples?: number;
}

/** Result of one window's fit; all numbers null unless status is 'ok' (the shared fields mean what they mean in a window result). */
export interface DampedSineFit extends Pick<WindowResult,
  'period_s' | 'period_sigma_s' | 'decay_time_s' | 'decay_time_sigma_s' | 'amplitude_rad' | 'amplitude_sigma_rad'
  | 'equilibrium_rad' | 'equilibrium_sigma_rad' | 'drift_rad_per_s' | 'drift_sigma_rad_per_s' | 'phase_rad'
  | 'residual_rms_rad' | 'chi2_red'> {
  status: FitStatus;
  /** human-readable detail of a rejection */
  message?: string;
  t_mid_s: number;
  /** unmasked samples with positive weight */
  samples: number;
  iterations: number;
  /** 1/τ, always finite for an 'ok' fit (may be slightly negative within noise) */
  decay_rate_per_s: number | null;
  decay_rate_sigma_per_s: number | null;
  phase_sigma_rad: number | null;
  /** σ_noise used for chi2_red, rad */
  noise_sigma_rad: number | null;
  noise_source: 'given' | 'differences' | null;
  /** weighted sum of squared residuals, rad² */
  ssr: number | null;
  /** 6×6 covariance of DAMPED_SINE_PARAMS (SI units) */
  covariance: number[][] | null;
}

const NP = 6;
const TWO_PI = 2 * Math.PI;

function rejected(status: FitStatus, message: string, tMid: number, samples: number, iterations = 0): DampedSineFit {
  return {
    status, message, t_mid_s: tMid, samples, iterations,
    period_s: null, period_sigma_s: null, decay_time_s: null, decay_time_sigma_s: null,
    decay_rate_per_s: null, decay_rate_sigma_per_s: null, amplitude_rad: null, amplitude_sigma_rad: null,
    equilibrium_rad: null, equilibrium_sigma_rad: null, drift_rad_per_s: null, drift_sigma_rad_per_s: null,
    phase_rad: null, phase_sigma_rad: null, residual_rms_rad: null, chi2_red: null,
    noise_sigma_rad: null, noise_source: null, ssr: null, covariance: null,
  };
}

/**
 * One pass: residuals and Jacobian of the scaled model at q, accumulating
 * H = JᵀWJ (lower triangle) and g = JᵀWr; returns Σw·r².
 */
function accumulate(
  u: Float64Array, z: Float64Array, w: Float64Array | null, q: Float64Array,
  h: Float64Array, g: Float64Array,
): number {
  const q0 = q[0], q1 = q[1], q2 = q[2], q3 = q[3], om = TWO_PI * q[4], r = q[5];
  let h00 = 0, h10 = 0, h11 = 0, h20 = 0, h21 = 0, h22 = 0, h30 = 0, h31 = 0, h32 = 0, h33 = 0;
  let h40 = 0, h41 = 0, h42 = 0, h43 = 0, h44 = 0, h50 = 0, h51 = 0, h52 = 0, h53 = 0, h54 = 0, h55 = 0;
  let g0 = 0, g1 = 0, g2 = 0, g3 = 0, g4 = 0, g5 = 0, ssr = 0;
  const n = u.length;
  // exp, cos and sin by recurrence while the sample spacing repeats (every
  // sample of a uniform grid; re-anchored every 32 samples so rounding stays
  // ~1e-14), directly after a gap or on a jittered grid
  const hu = n > 1 ? u[1] - u[0] : 0;
  const tol = 1e-11;
  const eh = Math.exp(-r * hu), ch = Math.cos(om * hu), sh = Math.sin(om * hu);
  let e = 1, c = 1, s = 0, run = 0, prev = NaN;
  for (let i = 0; i < n; i++) {
    const ui = u[i];
    const wi = w === null ? 1 : w[i];
    if (run > 0 && run < 32 && Math.abs(ui - prev - hu) <= tol) {
      e *= eh;
      const nc = c * ch - s * sh;
      s = s * ch + c * sh; c = nc;
      run++;
    } else {
      e = Math.exp(-r * ui); c = Math.cos(om * ui); s = Math.sin(om * ui);
      run = 1;
    }
    prev = ui;
    const j2 = e * c, j3 = e * s;
    const osc = q2 * j2 + q3 * j3;
    const res = z[i] - (q0 + q1 * ui + osc);
    const j4 = TWO_PI * ui * (q3 * j2 - q2 * j3);
    const j5 = -ui * osc;
    const wr = wi * res;
    ssr += wr * res;
    g0 += wr; g1 += wr * ui; g2 += wr * j2; g3 += wr * j3; g4 += wr * j4; g5 += wr * j5;
    const wu = wi * ui, w2 = wi * j2, w3 = wi * j3, w4 = wi * j4, w5 = wi * j5;
    h00 += wi; h10 += wu; h11 += wu * ui;
    h20 += w2; h21 += w2 * ui; h22 += w2 * j2;
    h30 += w3; h31 += w3 * ui; h32 += w3 * j2; h33 += w3 * j3;
    h40 += w4; h41 += w4 * ui; h42 += w4 * j2; h43 += w4 * j3; h44 += w4 * j4;
    h50 += w5; h51 += w5 * ui; h52 += w5 * j2; h53 += w5 * j3; h54 += w5 * j4; h55 += w5 * j5;
  }
  h[0] = h00;
  h[6] = h10; h[7] = h11;
  h[12] = h20; h[13] = h21; h[14] = h22;
  h[18] = h30; h[19] = h31; h[20] = h32; h[21] = h33;
  h[24] = h40; h[25] = h41; h[26] = h42; h[27] = h43; h[28] = h44;
  h[30] = h50; h[31] = h51; h[32] = h52; h[33] = h53; h[34] = h54; h[35] = h55;
  for (let a = 0; a < NP; a++) for (let b = a + 1; b < NP; b++) h[a * NP + b] = h[b * NP + a];
  g[0] = g0; g[1] = g1; g[2] = g2; g[3] = g3; g[4] = g4; g[5] = g5;
  return ssr;
}

/**
 * The checks an oscillation must pass to be accepted, on its final standard
 * errors: the amplitude significant (> 5σ and above `floor`), the decay not
 * significantly negative (rate < −3σ: a growing swing) and not overdamped
 * (Q = π/(γ·T₀) < 0.5, ω₀² = ω_d² + γ²). Null when it passes.
 */
export function judgeOscillation(
  v: { amplitude_rad: number; amplitude_sigma_rad: number; decay_rate_per_s: number; decay_rate_sigma_per_s: number; period_s: number },
  floor = 0,
): { status: FitStatus; message: string } | null {
  const { amplitude_rad: amp, amplitude_sigma_rad: sa, decay_rate_per_s: rate, decay_rate_sigma_per_s: sr } = v;
  if (!(amp > 5 * sa) || !(amp > floor)) {
    return { status: FIT_STATUS.amplitudeBelowNoise, message: `amplitude ${amp.toExponential(3)} rad vs σ ${sa.toExponential(2)}, floor ${floor.toExponential(2)} rad` };
  }
  const omd = TWO_PI / v.period_s;
  if (rate < -3 * sr || (rate > 0 && Math.sqrt(omd * omd + rate * rate) / (2 * rate) < 0.5)) {
    return { status: FIT_STATUS.decayUnphysical, message: `decay rate ${rate.toExponential(3)} ± ${sr.toExponential(2)} /s` };
  }
  return null;
}

/** Fit θ_eq + d·(t − t_mid) + A·e^(−(t − t_mid)/τ)·cos(2π(t − t_mid)/T + φ) to one window, with covariance. */
export function fitDampedSine(t: Float64Array, y: Float64Array, opts: DampedSineOptions = {}): DampedSineFit {
  const nAll = t.length;
  const mask = opts.mask;
  const wIn = opts.weights;
  const tMidDefault = nAll > 0 ? 0.5 * (t[0] + t[nAll - 1]) : NaN;
  const tMid = opts.tMid ?? tMidDefault;
  if (y.length !== nAll || (mask && mask.length !== nAll) || (wIn && wIn.length !== nAll)) {
    return rejected(FIT_STATUS.badInput, `lengths differ: t ${nAll}, y ${y.length}${mask ? `, mask ${mask.length}` : ''}${wIn ? `, weights ${wIn.length}` : ''}`, tMid, 0);
  }
  const minPeriods = opts.minPeriods ?? 1.5;
  const minSamples = Math.max(opts.minSamples ?? 20, NP + 2);
  const maxIter = opts.maxIterations ?? 60;

  // usable samples
  let n = 0, tFirst = Infinity, tLast = -Infinity;
  for (let i = 0; i < nAll; i++) {
    if (mask && mask[i]) continue;
    const wi = wIn ? wIn[i] : 1;
    if (!Number.isFinite(t[i]) || !Number.isFinite(y[i]) || !Number.isFinite(wi) || wi < 0) {
      return rejected(FIT_STATUS.nonFiniteInput, `sample ${i}: t, y or weight is not a finite number (weight must be ≥ 0)`, tMid, 0);
    }
    if (wi === 0) continue;
    n++;
    if (t[i] < tFirst) tFirst = t[i];
    if (t[i] > tLast) tLast = t[i];
  }
  if (!Number.isFinite(tMid)) return rejected(FIT_STATUS.badInput, 'tMid is not finite', tMid, n);
  if (n < minSamples) return rejected(FIT_STATUS.tooFewSamples, `${n} usable samples, need ≥ ${minSamples}`, tMid, n);

  let seed = opts.seed;
  if (!seed) {
    // zero-weight samples are excluded from the seed as well
    let seedMask = mask;
    if (wIn) {
      seedMask = new Uint8Array(nAll);
      for (let i = 0; i < nAll; i++) seedMask[i] = (mask && mask[i]) || wIn[i] === 0 ? 1 : 0;
    }
    const s = periodSeed(t, y, { mask: seedMask, tMid, minPeriod_s: opts.minPeriod_s, maxPeriod_s: opts.maxPeriod_s });
    if (!s.ok) {
      const st = s.reason === 'non-finite-input' ? FIT_STATUS.nonFiniteInput
        : s.reason === 'too-few-samples' ? FIT_STATUS.tooFewSamples : FIT_STATUS.noOscillation;
      return rejected(st, `period seed: ${s.reason}`, tMid, n);
    }
    seed = s;
  }
  const Ts = seed.period_s;
  if (!(Ts > 0) || !Number.isFinite(Ts) || !Number.isFinite(seed.amplitude) || !Number.isFinite(seed.phase_rad) || !Number.isFinite(seed.equilibrium)) {
    return rejected(FIT_STATUS.badInput, 'seed has a non-finite or non-positive field', tMid, n);
  }
  const span = tLast - tFirst;
  if (span / Ts < minPeriods) {
    return rejected(FIT_STATUS.tooFewPeriods, `window spans ${(span / Ts).toFixed(2)} periods, need ≥ ${minPeriods}`, tMid, n);
  }

  // scaled data: u = (t − tMid)/Ts, z = (y − y0)/S, packed without masked samples
  const y0 = seed.equilibrium;
  const S = seed.amplitude > 0 ? seed.amplitude : 1;
  const u = new Float64Array(n);
  const z = new Float64Array(n);
  const w = wIn ? new Float64Array(n) : null;
  let sumW = 0;
  for (let i = 0, k = 0; i < nAll; i++) {
    if (mask && mask[i]) continue;
    const wi = wIn ? wIn[i] : 1;
    if (wi === 0) continue;
    u[k] = (t[i] - tMid) / Ts;
    z[k] = (y[i] - y0) / S;
    if (w) w[k] = wi;
    sumW += wi;
    k++;
  }
  // seed phase refers to seed.tMid; move it to our tMid
  const phi0 = seed.phase_rad + (TWO_PI * (tMid - (seed.tMid ?? tMid))) / Ts;
  const A0 = seed.amplitude / S;
  const q = new Float64Array([0, ((seed.drift_per_s ?? 0) * Ts) / S, A0 * Math.cos(phi0), -A0 * Math.sin(phi0), 1, 0]);

  const h = new Float64Array(NP * NP), g = new Float64Array(NP);
  const hT = new Float64Array(NP * NP), gT = new Float64Array(NP);
  const a = new Float64Array(NP * NP), step = new Float64Array(NP), qT = new Float64Array(NP);
  let ssr = accumulate(u, z, w, q, h, g);
  if (!Number.isFinite(ssr)) return rejected(FIT_STATUS.didNotConverge, 'non-finite residual at the seed', tMid, n);
  let lambda = 1e-3;
  let converged = false;
  let iter = 0;
  const dof = n - NP;
  for (; iter < maxIter && !converged; iter++) {
    // Marquardt step: (H + λ·diag H)·δ = g
    a.set(h);
    for (let j = 0; j < NP; j++) a[j * NP + j] = h[j * NP + j] * (1 + lambda) + 1e-300;
    if (!choleskyInPlace(a, NP)) { lambda *= 10; if (lambda > 1e12) break; continue; }
    choleskySolve(a, NP, g, step);
    for (let j = 0; j < NP; j++) qT[j] = q[j] + step[j];
    const ssrT = accumulate(u, z, w, qT, hT, gT);
    if (Number.isFinite(ssrT) && ssrT <= ssr) {
      // size of the step in units of each parameter's (diagonal) standard error
      const s2 = Math.max(ssrT / dof, 1e-300);
      let stepSigma = 0, relStep = 0;
      for (let j = 0; j < NP; j++) {
        stepSigma = Math.max(stepSigma, Math.abs(step[j]) * Math.sqrt(h[j * NP + j] / s2));
        relStep = Math.max(relStep, Math.abs(step[j]) / (Math.abs(qT[j]) + 1e-3));
      }
      const dSsr = ssr - ssrT;
      q.set(qT); h.set(hT); g.set(gT); ssr = ssrT;
      lambda = Math.max(lambda / 10, 1e-12);
      if (stepSigma < 1e-4 || relStep < 1e-13 || dSsr <= 1e-15 * ssr) converged = true;
    } else {
      lambda *= 10;
      if (lambda > 1e12) break;
    }
  }
  if (!converged) return rejected(FIT_STATUS.didNotConverge, `no convergence after ${iter} iterations (λ ${lambda.toExponential(1)})`, tMid, n, iter);

  const s2 = ssr / dof;
  const hinv = spdInverse(h, NP);
  if (!hinv) return rejected(FIT_STATUS.singular, 'normal matrix is singular', tMid, n, iter);
  // physical parameters and their Jacobian G = ∂P/∂q
  const [q0, q1, q2, q3, nu, r] = q;
  const rho2 = q2 * q2 + q3 * q3, rho = Math.sqrt(rho2);
  const P = [y0 + S * q0, (S * q1) / Ts, S * rho, Math.atan2(-q3, q2), Ts / nu, r / Ts];
  const G = new Float64Array(NP * NP);
  G[0] = S;
  G[1 * NP + 1] = S / Ts;
  G[2 * NP + 2] = (S * q2) / rho; G[2 * NP + 3] = (S * q3) / rho;
  G[3 * NP + 2] = q3 / rho2; G[3 * NP + 3] = -q2 / rho2;
  G[4 * NP + 4] = -Ts / (nu * nu);
  G[5 * NP + 5] = 1 / Ts;
  const cov: number[][] = [];
  for (let i = 0; i < NP; i++) {
    const row: number[] = new Array(NP).fill(0);
    for (let j = 0; j < NP; j++) {
      let sum = 0;
      for (let k = 0; k < NP; k++) {
        const gik = G[i * NP + k];
        if (gik === 0) continue;
        for (let l = 0; l < NP; l++) sum += gik * hinv[k * NP + l] * G[j * NP + l];
      }
      row[j] = s2 * sum;
    }
    cov.push(row);
  }
  const sig = cov.map((row, i) => Math.sqrt(Math.max(row[i], 0)));
  const [eq, drift, amp, phase, period, rate] = P;
  const phaseWrapped = Math.atan2(Math.sin(phase), Math.cos(phase));

  const minP = opts.minPeriod_s ?? 3 * (span / Math.max(n - 1, 1));
  const maxP = opts.maxPeriod_s ?? span / minPeriods;
  const base = { t_mid_s: tMid, samples: n, iterations: iter };
  if (!(period >= minP && period <= maxP) || nu < 0.5 || nu > 2) {
    return { ...rejected(FIT_STATUS.periodOutsideWindow, `fitted period ${period.toPrecision(6)} s outside [${minP.toPrecision(4)}, ${maxP.toPrecision(4)}] s or far from the seed ${Ts.toPrecision(6)} s`, tMid, n, iter) };
  }
  const noiseGiven = opts.noiseSigma !== undefined;
  const noise = noiseGiven ? (opts.noiseSigma as number) : noiseFromDifferences(y, mask);
  if (opts.judge !== false) {
    const j = judgeOscillation({ amplitude_rad: amp, amplitude_sigma_rad: sig[2], decay_rate_per_s: rate, decay_rate_sigma_per_s: sig[5], period_s: period }, opts.noiseFloor ?? 0);
    if (j) return rejected(j.status, j.message, tMid, n, iter);
  }
  const tau = rate > 0 ? 1 / rate : null;
  return {
    status: FIT_STATUS.ok, ...base,
    period_s: period, period_sigma_s: sig[4],
    decay_time_s: tau, decay_time_sigma_s: tau === null ? null : sig[5] / (rate * rate),
    decay_rate_per_s: rate, decay_rate_sigma_per_s: sig[5],
    amplitude_rad: amp, amplitude_sigma_rad: sig[2],
    equilibrium_rad: eq, equilibrium_sigma_rad: sig[0],
    drift_rad_per_s: drift, drift_sigma_rad_per_s: sig[1],
    phase_rad: phaseWrapped, phase_sigma_rad: sig[3],
    residual_rms_rad: S * Math.sqrt(ssr / sumW),
    chi2_red: noise > 0 && Number.isFinite(noise) ? (S * S * s2) / (noise * noise) : null,
    noise_sigma_rad: Number.isFinite(noise) ? noise : null,
    noise_source: noiseGiven ? 'given' : 'differences',
    ssr: S * S * ssr,
    covariance: cov,
  };
}
