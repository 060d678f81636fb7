/**
 * One drift model fitted across all segments of a run together with an offset
 * per configuration: y_i = o_{c(i)} + D(t_i) + Σ_e β_e·x_e,i, for the window
 * equilibria (deflection: torque = κ·Δθ) or periods (time of swing). The
 * statistics behind it are in docs/analysis.md, "Configurations".
 *
 * - Drift D: a polynomial in time (Legendre basis over the data's span, so
 *   orders up to 8 stay well conditioned) of order 0…K_max, or logarithmic creep
 *   a·ln(1 + (t − t₀)/t_c) with or without a linear term when the run is
 *   settling (t_c nonlinear: a scan over ln t_c, each point a linear solve, then
 *   all parameters through the Levenberg–Marquardt wrapper lm.ts with the
 *   analytic Jacobian). Optional nuisance terms (the window temperature, the
 *   swing amplitude) are offered too. The candidate with the lowest Bayesian
 *   information criterion wins: BIC = χ²/(o·b²) + p·ln(n/o), with n/o the
 *   windows' independent count (o = window/step: overlapping windows share
 *   samples) and b² the richest polynomial's χ²/dof, so an error bar that is too
 *   small does not buy orders (the usual normalisation by the fullest model's
 *   residual variance, as in Mallows' C_p). BIC rather than AIC: its penalty grows
 *   with n, so a week of windows does not pick ever higher orders to chase noise.
 * - σ: the covariance (XᵀWX)⁻¹ times o (overlap) times f², f the larger of the
 *   segments' Birge ratio — the scatter of the segments' mean residuals, on their
 *   second differences (each segment against its neighbours), against what the
 *   windows' σ's predict for them (neighbourBirge). It sees the noise at the time
 *   scale of the switching, the one the comparison lives at: residuals correlated
 *   over hours (1/f torque noise, an imperfect drift model) raise it, overlapping
 *   windows whose errors anticorrelate (periods in readout noise) lower it, and it
 *   is used as it comes. Its degrees of freedom are as many as the segments allow;
 *   with fewer than MIN_SEGMENT_DOF the largest of 1, the windows' Birge ratio
 *   √(χ²/(n − o·p)) and the segments' own scatter (no differences, widened for
 *   its few degrees of freedom) stands in (and the output says so).
 */
import { Matrix, SingularValueDecomposition } from 'ml-matrix';
import { fitLM } from './lm.js';
import { weightedLeastSquares } from './weighted-least-squares.js';

/** The windows of a run, one entry per window used (times in s since the run's start). */
export interface ConfigurationData {
  t_s: ArrayLike<number>;
  y: ArrayLike<number>;
  sigma: ArrayLike<number>;
  /** configuration of each window, 0 … C − 1 */
  config: ArrayLike<number>;
  /** contiguous stretch of each window, 0 … S − 1 in time order */
  segment: ArrayLike<number>;
  /** nuisance regressors offered to the criterion (e.g. temperature in °C, amplitude in rad) */
  extras?: readonly { name: string; values: ArrayLike<number> }[];
}

/** Options of fitConfigurations. */
export interface ConfigurationFitOptions {
  /** window_periods/step_periods (default 1) */
  overlap?: number;
  /** highest polynomial order offered (default 8) */
  maxOrder?: number;
  /** offer logarithmic creep (default false) */
  logCreep?: boolean;
  /**
   * when the creep began, s (default: just before the first window — any time at or before the first window
   * and after the true onset is the same model, the shift absorbed by t_c: src/analysis/log-creep.ts)
   */
  creepStart_s?: number;
  /** the time at which each configuration's level is given (default the middle of the windows' span) */
  tRef_s?: number;
}

/** The drift model the criterion chose. */
export interface DriftModel {
  kind: 'polynomial' | 'log-creep';
  /** polynomial order; for log creep 0 or 1 (a linear term beside it) */
  order: number;
  criterion: 'BIC';
  /** nuisance terms kept */
  extras: string[];
  /** parameters of the whole model (configuration offsets included) */
  parameters: number;
  /** candidates compared */
  candidates: number;
  /** log creep: t_c and its σ, s; the creep amplitude a, in the unit of y */
  t_c_s?: number;
  t_c_sigma_s?: number;
  a?: number;
  a_sigma?: number;
  /** the nonlinear fit converged (log creep) */
  converged?: boolean;
  description: string;
}

/** The joint fit. */
export interface ConfigurationFit {
  /** configurations with at least one window */
  configurations: number;
  /**
   * each configuration's level at tRef_s (the extras at their means), indexed by the input's configuration
   * number (NaN for one without windows), and the covariance of the levels (row major, same indexing)
   */
  levels: Float64Array;
  levelCov: Float64Array;
  tRef_s: number;
  model: DriftModel;
  /** coefficients of the nuisance terms kept, by name, with σ */
  extras: Record<string, { value: number; sigma: number }>;
  /** χ²/(n − p) of the windows about the model */
  chi2_red: number;
  /** Birge ratios of the windows and of the neighbouring segments' differences; the latter null when fewer than 3 differences are free */
  birge_windows: number;
  birge_segments: number | null;
  segment_dof: number;
  /** the factor the covariance was scaled by beyond the overlap: max(1, both Birge ratios) */
  inflation: number;
  /** per segment: the drift-corrected level of its own windows (at tRef_s), its σ and the windows used */
  segments: { value: number; sigma: number; windows: number }[];
  windows: number;
}

interface Candidate {
  kind: 'polynomial' | 'log-creep';
  order: number;
  extras: number[];
  p: number;
  chi2: number;
  tc?: number;
}

/** Legendre polynomials P_1 … P_K at u (Bonnet's recursion), into out[0 … K−1]. */
function legendre(u: number, K: number, out: Float64Array, at = 0): void {
  let p0 = 1, p1 = u;
  for (let k = 1; k <= K; k++) {
    out[at + k - 1] = p1;
    const p2 = ((2 * k + 1) * u * p1 - k * p0) / (k + 1);
    p0 = p1;
    p1 = p2;
  }
}

/** Every subset of 0 … m−1 (m ≤ 3 here). */
function subsets(m: number): number[][] {
  const out: number[][] = [];
  for (let mask = 0; mask < 1 << m; mask++) out.push([...Array(m).keys()].filter((j) => mask & (1 << j)));
  return out;
}

/** Degrees of freedom of the segments' ratio needed before it replaces the windows' (fewer: too noisy a σ). */
const MIN_SEGMENT_DOF = 4;

/**
 * Birge ratio of the segments' mean residuals r̄ (predicted variances v, independent), taken on their
 * second differences δ_s = r̄_{s+1} − 2r̄_s + r̄_{s−1} — each segment against the mean of its neighbours,
 * as in an A-B-A sequence: χ² = Σ δ_s²/u_s (u_s = v_{s−1} + 4v_s + v_{s+1}) over its expectation were
 * the v's right. Under that null r̄ has the covariance V − Z·G·Zᵀ (G = (Zᵀ·V⁻¹·Z)⁺, Z the model's
 * columns averaged over each segment: the fit takes its share of every residual), so δ has
 * C = D·V·Dᵀ − (DZ)·G·(DZ)ᵀ, E[χ²] = tr(U⁻¹C) and var χ² = 2·tr((U⁻¹C)²); ν = 2E²/var is the
 * Satterthwaite number of degrees of freedom of the ratio (neighbouring second differences share
 * segments, so ν is about half their count).
 * A second difference passes what alternates from one segment to the next — the time scale of the
 * comparison — and stops the slow wander (and any linear drift) that the alternation of
 * configurations cancels anyway; a first difference let too much of the slow 1/f wander through (σ of
 * Δθ 1.6× the scatter over seeds in a thermal-noise-limited case). Null with fewer than 3 segments.
 */
function neighbourBirge(r: number[], v: number[], Z0: number[][], order: 0 | 2 = 2): { birge: number; dof: number } | null {
  const S = r.length;
  if (S < order + 1) return null;
  const p = Z0[0].length;
  // the projection does not depend on the columns' scale: make them comparable (kelvins beside radians)
  const norm = new Array(p).fill(0);
  for (const row of Z0) for (let j = 0; j < p; j++) norm[j] += row[j] * row[j];
  const Z = Z0.map((row) => row.map((x, j) => (norm[j] > 0 ? x / Math.sqrt(norm[j] / S) : 0)));
  const ZtVZ = new Matrix(p, p);
  for (let a = 0; a < p; a++) for (let b = 0; b < p; b++) {
    let x = 0;
    for (let s = 0; s < S; s++) x += (Z[s][a] * Z[s][b]) / v[s];
    ZtVZ.set(a, b, x);
  }
  const G = pseudoInverse(ZtVZ);
  const m = S - order;
  // second differences (order 2) of the residuals and of the columns, or the residuals themselves (order 0)
  const d = new Float64Array(m), u = new Float64Array(m);
  const DZ: Float64Array[] = [];
  for (let k = 0; k < m; k++) {
    if (order === 0) {
      d[k] = r[k]; u[k] = v[k];
      DZ.push(Float64Array.from(Z[k]));
      continue;
    }
    d[k] = r[k + 2] - 2 * r[k + 1] + r[k];
    u[k] = v[k] + 4 * v[k + 1] + v[k + 2];
    DZ.push(Float64Array.from({ length: p }, (_, j) => Z[k + 2][j] - 2 * Z[k + 1][j] + Z[k][j]));
  }
  const F = DZ.map((row) => Float64Array.from({ length: p }, (_, j) => {
    let x = 0;
    for (let i = 0; i < p; i++) x += row[i] * G.get(i, j);
    return x;
  }));
  // C_kl = (D·V·Dᵀ)_kl − F_k·DZ_l; D·V·Dᵀ is pentadiagonal (diagonal for order 0)
  const dvd = (k: number, l: number): number => {
    const lag = Math.abs(k - l);
    if (order === 0) return lag === 0 ? v[k] : 0;
    if (lag > 2) return 0;
    const a = Math.min(k, l);
    if (lag === 0) return u[k];
    if (lag === 1) return -2 * v[a + 1] - 2 * v[a + 2];
    return v[a + 2];
  };
  // tr(A) and tr(A²), A = U⁻¹C, in O(m·p²): C is a band (|k − l| ≤ 2) minus the rank-p part F·DZᵀ, so
  // Σ C_kl²/(u_k·u_l) = Σ_band dvd²/(uu) − 2·Σ_band dvd·(F_k·DZ_l)/(uu) + tr(P·Q), P = Σ F_kᵀF_k/u_k, Q = Σ DZ_lᵀDZ_l/u_l
  let chi2 = 0, tr = 0, tr2 = 0;
  const Pm = new Float64Array(p * p), Qm = new Float64Array(p * p);
  for (let k = 0; k < m; k++) {
    chi2 += (d[k] * d[k]) / u[k];
    let low = 0;
    for (let j = 0; j < p; j++) low += F[k][j] * DZ[k][j];
    tr += (dvd(k, k) - low) / u[k];
    for (let l = Math.max(0, k - 2); l <= Math.min(m - 1, k + 2); l++) {
      const b = dvd(k, l);
      if (b === 0) continue;
      let fl = 0;
      for (let j = 0; j < p; j++) fl += F[k][j] * DZ[l][j];
      tr2 += (b * b - 2 * b * fl) / (u[k] * u[l]);
    }
    for (let i = 0; i < p; i++) for (let j = 0; j < p; j++) {
      Pm[i * p + j] += (F[k][i] * F[k][j]) / u[k];
      Qm[i * p + j] += (DZ[k][i] * DZ[k][j]) / u[k];
    }
  }
  for (let i = 0; i < p; i++) for (let j = 0; j < p; j++) tr2 += Pm[i * p + j] * Qm[j * p + i];
  if (!(tr > 0) || !(tr2 > 0)) return null;
  return { birge: Math.sqrt(chi2 / tr), dof: (tr * tr) / tr2 };
}

/** Moore–Penrose inverse of a small symmetric matrix (singular values below 1e-12 of the largest dropped). */
function pseudoInverse(A: Matrix): Matrix {
  const svd = new SingularValueDecomposition(A, { autoTranspose: true });
  const sv = svd.diagonal, U = svd.leftSingularVectors, V = svd.rightSingularVectors;
  const top = Math.max(...sv);
  const n = A.rows;
  const out = new Matrix(n, n);
  for (let a = 0; a < n; a++) for (let b = 0; b < n; b++) {
    let x = 0;
    for (let k = 0; k < sv.length; k++) if (sv[k] > 1e-12 * top) x += (V.get(a, k) * U.get(b, k)) / sv[k];
    out.set(a, b, x);
  }
  return out;
}

/**
 * Fit the configurations and the drift jointly; null with fewer windows than a
 * model with a constant drift needs (one more than the configurations).
 */
export function fitConfigurations(data: ConfigurationData, opts: ConfigurationFitOptions = {}): ConfigurationFit | null {
  const o = Math.max(1, opts.overlap ?? 1);
  // the usable windows
  const idx: number[] = [];
  for (let i = 0; i < data.y.length; i++) {
    const s = data.sigma[i];
    if (Number.isFinite(data.y[i]) && Number.isFinite(data.t_s[i]) && s > 0 && Number.isFinite(s) && data.config[i] >= 0) idx.push(i);
  }
  // configurations and segments present, renumbered densely
  const cfgMap = new Map<number, number>();
  for (const i of idx) if (!cfgMap.has(data.config[i])) cfgMap.set(data.config[i], cfgMap.size);
  const C = cfgMap.size;
  const n = idx.length;
  if (C === 0 || n < C + 1) return null;
  let cIn = 0;
  for (const i of idx) cIn = Math.max(cIn, data.config[i] + 1);
  const t = Float64Array.from(idx, (i) => data.t_s[i]);
  const w = Float64Array.from(idx, (i) => 1 / data.sigma[i] ** 2);
  const cfg = Int32Array.from(idx, (i) => cfgMap.get(data.config[i])!);
  const seg = Int32Array.from(idx, (i) => data.segment[i]);
  // centre y (the offsets absorb it exactly) and the extras (levels are then at the extras' means)
  let sw = 0, swy = 0;
  for (let k = 0; k < n; k++) { sw += w[k]; swy += w[k] * data.y[idx[k]]; }
  const yBar = swy / sw;
  const y = Float64Array.from(idx, (i) => data.y[i] - yBar);
  const extras = (data.extras ?? []).map((e) => {
    let m = 0;
    for (let k = 0; k < n; k++) m += w[k] * e.values[idx[k]];
    m /= sw;
    const v = Float64Array.from(idx, (i) => e.values[i] - m);
    let spread = 0, finite = true;
    for (const x of v) { if (!Number.isFinite(x)) finite = false; spread = Math.max(spread, Math.abs(x)); }
    return { name: e.name, v, usable: finite && spread > 0 };
  }).filter((e) => e.usable);

  let t0 = Infinity, t1 = -Infinity;
  for (const x of t) { t0 = Math.min(t0, x); t1 = Math.max(t1, x); }
  const tm = (t0 + t1) / 2, half = (t1 - t0) / 2 || 1;
  const tRef = opts.tRef_s ?? tm;
  const u = Float64Array.from(t, (x) => (x - tm) / half);
  const nEff = Math.max(n / o, 2);
  let S = 0;
  for (const s of seg) S = Math.max(S, s + 1);
  // orders beyond half the segments' free second differences would leave too few to measure the scatter
  // at the switching time scale (and a polynomial that wiggles as fast as the switching takes the place of
  // the offsets); a linear drift is always offered, as long as the windows allow
  const Kmax = Math.max(0, Math.min(opts.maxOrder ?? 8, Math.max(1, Math.floor((S - 2 - C) / 2)), Math.floor(nEff) - C - 1));
  const P = new Float64Array(n * Math.max(Kmax, 1));
  for (let k = 0; k < n; k++) legendre(u[k], Kmax, P, k * Math.max(Kmax, 1));
  const creepStart = opts.creepStart_s ?? t0 - 1e-3 * Math.max(t1 - t0, 1);

  // design of a candidate: [indicators C | drift columns | extras]
  const design = (driftCols: number, fill: (k: number, row: Float64Array, at: number) => void, ex: number[]): Float64Array => {
    const p = C + driftCols + ex.length;
    const X = new Float64Array(n * p);
    for (let k = 0; k < n; k++) {
      const r = k * p;
      X[r + cfg[k]] = 1;
      fill(k, X, r + C);
      for (let j = 0; j < ex.length; j++) X[r + C + driftCols + j] = extras[ex[j]].v[k];
    }
    return X;
  };
  const polyFill = (K: number) => (k: number, X: Float64Array, at: number) => {
    for (let j = 0; j < K; j++) X[at + j] = P[k * Math.max(Kmax, 1) + j];
  };
  const creepFill = (tc: number, lin: number) => (k: number, X: Float64Array, at: number) => {
    X[at] = Math.log1p((t[k] - creepStart) / tc);
    if (lin) X[at + 1] = u[k];
  };

  const exSets = subsets(extras.length);
  const cands: Candidate[] = [];
  for (let K = 0; K <= Kmax; K++) {
    for (const ex of exSets) {
      const f = weightedLeastSquares(design(K, polyFill(K), ex), C + K + ex.length, y, w);
      if (f) cands.push({ kind: 'polynomial', order: K, extras: ex, p: f.p, chi2: f.chi2 });
    }
  }
  if (cands.length === 0) return null;
  // the normalisation of χ²: the richest polynomial's residual variance per degree of freedom
  const richest = cands.reduce((a, c) => (c.p > a.p ? c : a));
  const b2 = Math.max(1, richest.chi2 / Math.max(n - o * richest.p, n - richest.p, 1));
  const bic = (c: Candidate) => c.chi2 / (o * b2) + c.p * Math.log(nEff);

  // log creep: the start time must precede every window
  const span = t1 - Math.min(creepStart, t0);
  if (opts.logCreep && t0 > creepStart && n > C + 4) {
    const tcMin = Math.max(1e-3 * span, 1), tcMax = 100 * span;
    let best: Candidate | null = null;
    for (const lin of [0, 1]) {
      for (const ex of exSets) {
        for (let s = 0; s <= 30; s++) {
          const tc = Math.exp(Math.log(tcMin) + (Math.log(tcMax / tcMin) * s) / 30);
          const f = weightedLeastSquares(design(1 + lin, creepFill(tc, lin), ex), C + 1 + lin + ex.length, y, w);
          // t_c is a parameter too
          const c: Candidate = f ? { kind: 'log-creep', order: lin, extras: ex, p: f.p + 1, chi2: f.chi2, tc } : (null as never);
          if (f && (!best || bic(c) < bic(best))) best = c;
        }
      }
    }
    if (best) cands.push(best);
  }
  let chosen = cands.reduce((a, c) => (bic(c) < bic(a) ? c : a));

  // the chosen model's parameters and plain covariance (XᵀWX)⁻¹ (for log creep, JᵀWJ at the optimum)
  let beta: Float64Array, cov: Float64Array, p: number, chi2: number;
  let design1: Float64Array;
  let creep: { tc: number; tcSigma: number; converged: boolean } | null = null;
  if (chosen.kind === 'polynomial') {
    design1 = design(chosen.order, polyFill(chosen.order), chosen.extras);
    const f = weightedLeastSquares(design1, chosen.p, y, w)!;
    ({ beta, cov, p, chi2 } = f);
  } else {
    const lin = chosen.order, ex = chosen.extras, tc0 = chosen.tc!;
    const pl = C + 1 + lin + ex.length;
    const f0 = weightedLeastSquares(design(1 + lin, creepFill(tc0, lin), ex), pl, y, w)!;
    const p0 = [...f0.beta, tc0];
    const scale = [...Array.from({ length: pl }, (_, j) => Math.sqrt(f0.cov[j * pl + j]) || 1), tc0];
    const model = (q: number[]) => (k: number) => {
      let v = q[cfg[k]] + q[C] * Math.log1p((t[k] - creepStart) / q[pl]);
      if (lin) v += q[C + 1] * u[k];
      for (let j = 0; j < ex.length; j++) v += q[C + 1 + lin + j] * extras[ex[j]].v[k];
      return v;
    };
    const jacobian = (q: number[]) => (k: number) => {
      const d = new Array(pl + 1).fill(0);
      const dt = t[k] - creepStart;
      d[cfg[k]] = 1;
      d[C] = Math.log1p(dt / q[pl]);
      if (lin) d[C + 1] = u[k];
      for (let j = 0; j < ex.length; j++) d[C + 1 + lin + j] = extras[ex[j]].v[k];
      d[pl] = (-q[C] * dt) / (q[pl] * (q[pl] + dt));
      return d;
    };
    const r = fitLM({
      x: Float64Array.from({ length: n }, (_, k) => k), y, weights: w, model, jacobian, p0, scale,
      min: [...new Array(pl).fill(-Infinity), Math.max(1e-3 * span, 1e-3)], max: [...new Array(pl).fill(Infinity), 1e3 * span],
    });
    const ok = r.converged && r.params.every(Number.isFinite);
    const q = ok ? r.params : p0;
    p = pl + 1;
    // the final design is the Jacobian at the optimum (linear in every parameter but t_c)
    design1 = new Float64Array(n * p);
    const jf = jacobian(q);
    for (let k = 0; k < n; k++) design1.set(jf(k), k * p);
    const lin1 = weightedLeastSquares(design1, p, y, w);
    if (!lin1) {
      // t_c not determined: keep it fixed at the scan's value
      design1 = design(1 + lin, creepFill(tc0, lin), ex);
      ({ beta, cov, chi2 } = f0);
      p = pl;
      chosen = { ...chosen, p: pl + 1 };
      creep = { tc: tc0, tcSigma: NaN, converged: false };
    } else {
      beta = Float64Array.from(q);
      cov = lin1.cov;
      let c2 = 0;
      const mf = model(q);
      for (let k = 0; k < n; k++) c2 += w[k] * (y[k] - mf(k)) ** 2;
      chi2 = c2;
      creep = { tc: q[pl], tcSigma: Math.sqrt(cov[pl * p + pl]), converged: ok };
    }
  }

  // residuals, the windows' Birge ratio
  const resid = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    let f = 0;
    for (let j = 0; j < p; j++) f += design1[k * p + j] * beta[j];
    resid[k] = y[k] - f;
  }
  // for log creep the design is the Jacobian: the model value itself gives the residual
  if (creep) {
    const lin = chosen.order, ex = chosen.extras;
    for (let k = 0; k < n; k++) {
      let v = beta[cfg[k]] + beta[C] * Math.log1p((t[k] - creepStart) / creep.tc);
      if (lin) v += beta[C + 1] * u[k];
      for (let j = 0; j < ex.length; j++) v += beta[C + 1 + lin + j] * extras[ex[j]].v[k];
      resid[k] = y[k] - v;
    }
  }
  const birgeW = Math.sqrt(chi2 / Math.max(n - o * p, n - p, 1));

  // one level up: the segments' mean residuals, and the differences between neighbouring segments
  const segW = new Float64Array(S), segR = new Float64Array(S), segN = new Int32Array(S), segCfg = new Int32Array(S);
  const segZ: number[][] = Array.from({ length: S }, () => new Array(p).fill(0));
  for (let k = 0; k < n; k++) {
    const s = seg[k];
    segW[s] += w[k];
    segR[s] += w[k] * resid[k];
    segN[s]++;
    segCfg[s] = cfg[k];
    for (let j = 0; j < p; j++) segZ[s][j] += w[k] * design1[k * p + j];
  }
  const segVar = new Float64Array(S);
  const used: number[] = [];
  for (let s = 0; s < S; s++) {
    if (segN[s] === 0) continue;
    segR[s] /= segW[s];
    // o overlapping windows of a segment share their noise (segments do not overlap: the windows around a change are out)
    segVar[s] = Math.min(o, segN[s]) / segW[s];
    for (let j = 0; j < p; j++) segZ[s][j] /= segW[s];
    used.push(s);
  }
  const nb = neighbourBirge(used.map((s) => segR[s]), used.map((s) => segVar[s]), used.map((s) => segZ[s]));
  const birgeS = nb && nb.dof >= MIN_SEGMENT_DOF ? nb.birge : null;
  // too few for second differences: the segments' own scatter, widened the same way, as a floor under the windows'
  const plain = birgeS === null ? neighbourBirge(used.map((s) => segR[s]), used.map((s) => segVar[s]), used.map((s) => segZ[s]), 0) : null;
  // (with three or fewer degrees of freedom the widening is held at its value for three, √3)
  const plainF = plain && plain.dof >= 1 ? plain.birge * Math.sqrt(Math.max(plain.dof, 3) / (Math.max(plain.dof, 3) - 2)) : 0;
  // the segments' ratio measures the scatter at the switching time scale, the one the comparison lives at,
  // whatever the windows' correlations (overlapping windows' periods can even anticorrelate): it is used as
  // it comes, below 1 too, and widened by √(ν/(ν − 2)), the standard deviation of the Student t with its ν
  // degrees of freedom (JCGM 101:2008, GUM Supplement 1, 6.4.9.4: the standard uncertainty of a mean whose
  // scale comes from few observations); with too few segments the windows' ratio stands in, never below 1
  const f = birgeS !== null ? birgeS * Math.sqrt(nb!.dof / (nb!.dof - 2)) : Math.max(1, birgeW, plainF);
  const scale = o * f * f;
  const segDof = nb?.dof ?? 0;

  // the levels at tRef: offset + drift(tRef); the extras at their means
  const g = new Float64Array(p);
  const driftAt = (gout: Float64Array): number => {
    gout.fill(0);
    if (chosen.kind === 'polynomial') {
      const K = chosen.order;
      const L = new Float64Array(Math.max(K, 1));
      legendre((tRef - tm) / half, K, L);
      let d = 0;
      for (let j = 0; j < K; j++) { gout[C + j] = L[j]; d += L[j] * beta[C + j]; }
      return d;
    }
    const dt = tRef - creepStart;
    const lc = Math.log1p(dt / creep!.tc);
    gout[C] = lc;
    let d = beta[C] * lc;
    if (chosen.order) { const ur = (tRef - tm) / half; gout[C + 1] = ur; d += beta[C + 1] * ur; }
    if (p > C + 1 + chosen.order + chosen.extras.length) gout[p - 1] = (-beta[C] * dt) / (creep!.tc * (creep!.tc + dt));
    return d;
  };
  const dRef = driftAt(g);
  const dense = new Float64Array(C);
  const G: Float64Array[] = [];
  for (let c = 0; c < C; c++) {
    dense[c] = yBar + beta[c] + dRef;
    const gc = Float64Array.from(g);
    gc[c] += 1;
    G.push(gc);
  }
  // back to the caller's numbering
  const levels = new Float64Array(cIn).fill(NaN), levelCov = new Float64Array(cIn * cIn).fill(NaN);
  for (const [ci, a] of cfgMap) {
    levels[ci] = dense[a];
    for (const [cj, b] of cfgMap) {
      let v = 0;
      for (let i = 0; i < p; i++) for (let j = 0; j < p; j++) v += G[a][i] * cov[i * p + j] * G[b][j];
      levelCov[ci * cIn + cj] = v * scale;
    }
  }
  const segOut = Array.from({ length: S }, (_, s) => (segN[s] === 0
    ? { value: NaN, sigma: NaN, windows: 0 }
    : { value: dense[segCfg[s]] + segR[s], sigma: f * Math.sqrt(segVar[s]), windows: segN[s] }));
  const exOut: Record<string, { value: number; sigma: number }> = {};
  const exAt = C + (chosen.kind === 'polynomial' ? chosen.order : 1 + chosen.order);
  chosen.extras.forEach((e, j) => {
    exOut[extras[e].name] = { value: beta[exAt + j], sigma: Math.sqrt(cov[(exAt + j) * p + exAt + j] * scale) };
  });
  const exNames = chosen.extras.map((e) => extras[e].name);
  const model: DriftModel = {
    kind: chosen.kind, order: chosen.order, criterion: 'BIC', extras: exNames, parameters: chosen.p, candidates: cands.length,
    description: '',
  };
  const withEx = exNames.length ? ` with ${exNames.join(' and ')} terms` : '';
  if (chosen.kind === 'polynomial') {
    model.description = `polynomial of order ${chosen.order} in time${withEx}, chosen by BIC among ${cands.length} candidates`;
  } else {
    const tcS = creep!.tcSigma;
    model.t_c_s = creep!.tc;
    model.t_c_sigma_s = Number.isFinite(tcS) ? tcS * Math.sqrt(scale) : undefined;
    model.a = beta[C];
    model.a_sigma = Math.sqrt(cov[C * p + C] * scale);
    model.converged = creep!.converged;
    model.description = `logarithmic creep a·ln(1 + t/t_c)${chosen.order ? ' plus a linear term' : ''}${withEx}, chosen by BIC among ${cands.length} candidates`;
  }
  return {
    configurations: C, levels, levelCov, tRef_s: tRef, model, extras: exOut,
    chi2_red: chi2 / Math.max(n - p, 1), birge_windows: birgeW, birge_segments: birgeS, segment_dof: segDof, inflation: f,
    segments: segOut, windows: n,
  };
}
