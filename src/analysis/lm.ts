/**
 * Generic nonlinear least squares over ml-levenberg-marquardt 5.1.0, with the
 * library's known gaps closed in one place (docs/dependencies.md "ml-levenberg-marquardt"):
 *
 * - Scaling: parameters are fitted as q = p / scale (default scale |p0|, or 1)
 *   and residuals are divided by the data's RMS, because the library adds an
 *   absolute λ to JᵀJ (Levenberg, not Marquardt) and its stop rule is an
 *   absolute sum of squares.
 * - Jacobian: always passed as `jacobianFunction` — the analytic one when
 *   given, else central differences with a *relative* step (the library's
 *   `gradientDifference` is an absolute 0.1).
 * - Weights: folded into data and model (x becomes the sample index, y and
 *   the model are multiplied by √w), since varying `weights` are broken in 5.1.0.
 * - Convergence: the library has no convergence flag, accepts uphill steps
 *   and restarts λ at every call; we run it in bursts of iterations and judge
 *   the relative change of parameters and of the SSR between bursts. It
 *   cannot polish to full precision (with steps always accepted and an
 *   absolute λ it oscillates near the minimum of ill-conditioned problems),
 *   so the last stage is our own Marquardt iteration (λ·diag(JᵀJ),
 *   accept/reject, Nielsen's λ update) with the same convergence rule, which
 *   also takes over when the library stalls, throws or produces NaN.
 * - Retry strategy: because the library's uphill steps can jump basins
 *   (ENSO from NIST Start 1) or run to a stationary point at infinity
 *   (MGH09 from Start 1), our iteration also runs from p0, and the lower
 *   converged SSR wins; only when both fail, a multistart from p0 scaled by
 *   0.1, 10, 0.5 and 2 (BoxBOD from Start 1). A point where a parameter is
 *   undetermined (relative SD > 1e8) is never called converged. MGH10 from
 *   Start 1 is still not reached, and is reported as not converged.
 *   `reason` says which stage and start gave the answer.
 * - NaN: a non-finite SSR stops the library silently; we check every burst.
 * - Bounds: the library only clamps; our stage clamps too, and `atBound`
 *   flags a parameter that ends on its bound (converged is then false).
 * - Covariance: s²·(JᵀJ)⁻¹, s² = SSR/(n − p), by SVD of the column-scaled
 *   Jacobian (ml-matrix), so near-singular problems give large, not garbage,
 *   uncertainties; exactly singular directions give Infinity.
 */
import { levenbergMarquardt } from 'ml-levenberg-marquardt';
import { Matrix, SingularValueDecomposition } from 'ml-matrix';
import { choleskyInPlace, choleskySolve } from './linalg.js';

/** A least-squares problem y ≈ model(p)(x). */
export interface LMProblem {
  x: ArrayLike<number>;
  y: ArrayLike<number>;
  /** the model: parameters → (x → value) */
  model: (p: number[]) => (x: number) => number;
  /** analytic ∂model/∂p (default: relative central differences) */
  jacobian?: (p: number[]) => (x: number) => number[];
  /** start values */
  p0: number[];
  /** typical magnitude of each parameter (default |p0|, or 1 where p0 is 0) */
  scale?: number[];
  /** lower bounds (default none) */
  min?: number[];
  /** upper bounds (default none) */
  max?: number[];
  /** inverse-variance weight of each point (default all 1) */
  weights?: ArrayLike<number>;
}

/** Options of `fitLM`. */
export interface LMOptions {
  /** total iteration limit over both stages (default 1000) */
  maxIterations?: number;
  /** library iterations per burst (default 10) */
  burst?: number;
  /** library bursts before handing over to our Marquardt stage (default 20) */
  maxBursts?: number;
  /** relative parameter change that counts as converged (default 1e-10) */
  xtol?: number;
  /** relative SSR change that counts as converged (default 1e-14) */
  ftol?: number;
  /** skip the library stage and use only our Marquardt iteration (default false) */
  ownOnly?: boolean;
  /** use only the library, no polishing stage (default false; for cross-checks) */
  libraryOnly?: boolean;
}

/** Result of `fitLM`. */
export interface LMResult {
  params: number[];
  /** standard errors √diag(covariance) */
  sigmas: number[];
  covariance: number[][];
  /** weighted sum of squared residuals at params */
  ssr: number;
  /** √(ssr/(n − p)) */
  residualSd: number;
  iterations: number;
  converged: boolean;
  reason: string;
  /** true where a parameter ended on its bound */
  atBound: boolean[];
}

interface Scaled {
  n: number;
  p: number;
  /** residuals r_i = (y_i − f_i)·√w_i / ys */
  residuals(q: Float64Array, out: Float64Array): number;
  /** Jacobian of f_i·√w_i/ys over q, row-major n×p */
  jac(q: Float64Array, out: Float64Array): void;
  toP(q: ArrayLike<number>): number[];
  ys: number;
  sc: number[];
}

function buildScaled(pr: LMProblem): Scaled {
  const n = pr.x.length, p = pr.p0.length;
  const sc = pr.p0.map((v, j) => {
    const s = pr.scale?.[j] ?? Math.abs(v);
    return s > 0 && Number.isFinite(s) ? s : 1;
  });
  const sw = new Float64Array(n);
  let s2 = 0;
  for (let i = 0; i < n; i++) {
    const w = pr.weights ? pr.weights[i] : 1;
    sw[i] = Math.sqrt(w);
    s2 += w * pr.y[i] * pr.y[i];
  }
  const ys = Math.sqrt(s2 / n) || 1;
  const toP = (q: ArrayLike<number>): number[] => sc.map((s, j) => q[j] * s);
  const residuals = (q: Float64Array, out: Float64Array): number => {
    const f = pr.model(toP(q));
    let ssr = 0;
    for (let i = 0; i < n; i++) {
      const r = ((pr.y[i] - f(pr.x[i])) * sw[i]) / ys;
      out[i] = r;
      ssr += r * r;
    }
    return ssr;
  };
  const jac = (q: Float64Array, out: Float64Array): void => {
    if (pr.jacobian) {
      const jf = pr.jacobian(toP(q));
      for (let i = 0; i < n; i++) {
        const d = jf(pr.x[i]);
        for (let j = 0; j < p; j++) out[i * p + j] = (d[j] * sc[j] * sw[i]) / ys;
      }
      return;
    }
    // central differences, step relative to the (scaled, order-one) parameter
    const qq = Float64Array.from(q);
    for (let j = 0; j < p; j++) {
      const h = 1e-6 * Math.max(Math.abs(q[j]), 1);
      qq[j] = q[j] + h;
      const fp = pr.model(toP(qq));
      qq[j] = q[j] - h;
      const fm = pr.model(toP(qq));
      qq[j] = q[j];
      for (let i = 0; i < n; i++) out[i * p + j] = ((fp(pr.x[i]) - fm(pr.x[i])) / (2 * h) * sw[i]) / ys;
    }
  };
  return { n, p, residuals, jac, toP, ys, sc };
}

/** Fit a model by Levenberg–Marquardt (ml-levenberg-marquardt plus our own polishing stage) with covariance and a convergence verdict. */
export function fitLM(problem: LMProblem, opts: LMOptions = {}): LMResult {
  const n = problem.x.length, p = problem.p0.length;
  if (problem.y.length !== n) throw new RangeError(`fitLM: y has ${problem.y.length} points, x has ${n}`);
  if (n <= p) throw new RangeError(`fitLM: ${n} points cannot determine ${p} parameters`);
  if (problem.weights && problem.weights.length !== n) throw new RangeError(`fitLM: weights has ${problem.weights.length} entries, need ${n}`);
  const maxIter = opts.maxIterations ?? 1000;
  const xtol = opts.xtol ?? 1e-10, ftol = opts.ftol ?? 1e-14;
  const S = buildScaled(problem);
  const sc = S.sc;
  const qMin = problem.min ? problem.min.map((v, j) => v / sc[j]) : new Array(p).fill(-Infinity);
  const qMax = problem.max ? problem.max.map((v, j) => v / sc[j]) : new Array(p).fill(Infinity);
  let q: Float64Array = Float64Array.from(problem.p0, (v, j) => v / sc[j]);
  const r = new Float64Array(n);
  let ssr = S.residuals(q, r);
  if (!Number.isFinite(ssr)) throw new RangeError('fitLM: the model is not finite at p0');
  let iterations = 0;
  let stage = '';

  if (!opts.ownOnly) {
    // stage 1: the library in bursts; x is the sample index so √w and 1/ys fold into the model
    const burst = opts.burst ?? 10, maxBursts = opts.maxBursts ?? 20;
    const idx = Array.from({ length: n }, (_, i) => i);
    const yw = Array.from({ length: n }, (_, i) => (problem.y[i] * Math.sqrt(problem.weights ? problem.weights[i] : 1)) / S.ys);
    const modelIdx = (qa: number[]) => {
      const f = problem.model(S.toP(qa));
      return (i: number) => (f(problem.x[i]) * Math.sqrt(problem.weights ? problem.weights[i] : 1)) / S.ys;
    };
    const jbuf = new Float64Array(n * p);
    const jacIdx = (qa: number[]) => {
      S.jac(Float64Array.from(qa), jbuf);
      return (i: number) => Array.from(jbuf.subarray(i * p, i * p + p));
    };
    stage = 'library: burst limit';
    for (let b = 0; b < maxBursts && iterations < maxIter; b++) {
      let out: { parameterValues: number[]; iterations: number };
      try {
        out = levenbergMarquardt({ x: idx, y: yw }, modelIdx, {
        initialValues: Array.from(q), maxIterations: burst, errorTolerance: 0,
        jacobianFunction: jacIdx,
        minValues: qMin.map((v) => (Number.isFinite(v) ? v : -Number.MAX_VALUE)),
        maxValues: qMax.map((v) => (Number.isFinite(v) ? v : Number.MAX_VALUE)),
        });
      } catch (e) {
        // e.g. "LU matrix is singular" from its fallback inverse
        stage = `library: threw (${(e as Error).message})`;
        break;
      }
      iterations += out.iterations;
      const qn = Float64Array.from(out.parameterValues);
      const ssrN = S.residuals(qn, r);
      if (!Number.isFinite(ssrN)) { stage = 'library: non-finite SSR'; break; }
      const dq = relChange(q, qn), df = Math.abs(ssr - ssrN) / Math.max(ssr, 1e-300);
      if (ssrN <= ssr) { q = qn; ssr = ssrN; }
      if (dq < xtol && df < ftol) { stage = 'library: converged'; break; }
      if (ssrN > ssr || out.iterations < burst) { stage = 'library: stalled'; break; }
    }
    if (opts.libraryOnly) return finish(problem, S, q, qMin, qMax, iterations, stage.endsWith('converged'), stage);
  }

  // stage 2: our Marquardt iteration from where the library ended
  const own = marquardt(S, q, qMin, qMax, Math.max(maxIter - iterations, 50), xtol, ftol);
  iterations += own.iterations;
  const viaLibrary = finish(problem, S, own.q, qMin, qMax, iterations, own.converged, `${stage ? stage + '; ' : ''}marquardt: ${own.reason}`);
  if (opts.ownOnly) return viaLibrary;
  // Second engine from p0: the library accepts uphill steps and so can jump
  // to another basin (ENSO from Start 1 ends in the local minimum
  // SSR 853.05, certified 788.54) or wander to a stationary point at
  // infinity (MGH09 from Start 1); our Marquardt iteration only descends.
  // The lower converged SSR wins.
  const q0 = Float64Array.from(problem.p0, (v, j) => v / sc[j]);
  const cands: LMResult[] = [viaLibrary];
  const direct = marquardt(S, q0, qMin, qMax, maxIter, xtol, ftol);
  iterations += direct.iterations;
  cands.push(finish(problem, S, direct.q, qMin, qMax, iterations, direct.converged, `marquardt from p0: ${direct.reason}`));
  // Multistart, only when both failed: p0 scaled by 0.1, 10, 0.5, 2 (e.g.
  // BoxBOD from Start 1, where b2 = 1 sits on a plateau that leads to b2 → ∞).
  if (!cands.some((c) => c.converged)) {
    for (const f of [0.1, 10, 0.5, 2]) {
      const m = marquardt(S, q0.map((v) => v * f), qMin, qMax, maxIter, xtol, ftol);
      iterations += m.iterations;
      cands.push(finish(problem, S, m.q, qMin, qMax, iterations, m.converged, `multistart p0×${f}: marquardt: ${m.reason}`));
    }
  }
  const good = cands.filter((c) => c.converged);
  const pool = good.length > 0 ? good : cands;
  let best = pool[0];
  for (const c of pool) if (c.ssr < best.ssr) best = c;
  return { ...best, iterations };
}

function relChange(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let m = 0;
  for (let j = 0; j < a.length; j++) m = Math.max(m, Math.abs(a[j] - b[j]) / Math.max(Math.abs(b[j]), 1e-8));
  return m;
}

/** Levenberg–Marquardt with Marquardt's diagonal scaling and Nielsen's λ update (Madsen, Nielsen & Tingleff 2004, "Methods for non-linear least squares problems", alg. 3.16) */
function marquardt(
  S: Scaled, q0: Float64Array, qMin: number[], qMax: number[], maxIter: number, xtol: number, ftol: number,
): { q: Float64Array; iterations: number; converged: boolean; reason: string } {
  const { n, p } = S;
  let q: Float64Array = Float64Array.from(q0);
  const r = new Float64Array(n), rT = new Float64Array(n);
  const J = new Float64Array(n * p);
  const H = new Float64Array(p * p), g = new Float64Array(p), A = new Float64Array(p * p);
  const step = new Float64Array(p), qT = new Float64Array(p), D = new Float64Array(p);
  let ssr = S.residuals(q, r);
  let lambda = -1, nu = 2;
  let fresh = true;
  let small = 0;
  for (let it = 0; it < maxIter; it++) {
    if (fresh) {
      S.jac(q, J);
      H.fill(0); g.fill(0);
      for (let i = 0; i < n; i++) {
        const ri = r[i], o = i * p;
        for (let a = 0; a < p; a++) {
          const ja = J[o + a];
          g[a] += ja * ri;
          for (let b = 0; b <= a; b++) H[a * p + b] += ja * J[o + b];
        }
      }
      for (let a = 0; a < p; a++) {
        for (let b = a + 1; b < p; b++) H[a * p + b] = H[b * p + a];
        D[a] = Math.max(D[a], H[a * p + a]); // Moré: never-shrinking scale
      }
      if (lambda < 0) lambda = 1e-3; // dimensionless: the damping term is λ·D
      fresh = false;
      let gmax = 0;
      for (let a = 0; a < p; a++) gmax = Math.max(gmax, Math.abs(g[a]) / Math.sqrt(Math.max(D[a], 1e-300)));
      if (gmax <= 1e-15 * Math.sqrt(Math.max(ssr, 1e-300)) || ssr === 0) {
        return { q, iterations: it, converged: true, reason: 'gradient zero' };
      }
    }
    A.set(H);
    for (let a = 0; a < p; a++) A[a * p + a] += lambda * Math.max(D[a], 1e-300);
    if (!choleskyInPlace(A, p)) { lambda *= nu; nu *= 2; continue; }
    choleskySolve(A, p, g, step);
    for (let a = 0; a < p; a++) qT[a] = Math.min(Math.max(q[a] + step[a], qMin[a]), qMax[a]);
    const ssrT = S.residuals(qT, rT);
    // predicted reduction of ½‖r‖²-model: ½·δᵀ(λDδ + g)
    let pred = 0;
    for (let a = 0; a < p; a++) pred += (qT[a] - q[a]) * (lambda * D[a] * (qT[a] - q[a]) + g[a]);
    const rho = Number.isFinite(ssrT) && pred > 0 ? (ssr - ssrT) / pred : -1;
    if (rho > 0) {
      const dq = relChange(q, qT), df = (ssr - ssrT) / Math.max(ssr, 1e-300);
      q = Float64Array.from(qT); r.set(rT); ssr = ssrT;
      lambda *= Math.max(1 / 3, 1 - (2 * rho - 1) ** 3);
      nu = 2;
      fresh = true;
      // two successive tiny accepted steps: converged
      if (dq < xtol && df < ftol) { if (++small >= 2) return { q, iterations: it + 1, converged: true, reason: 'relative change below tolerance' }; }
      else small = 0;
    } else {
      lambda *= nu; nu *= 2;
      if (lambda > 1e16) {
        // no decrease even for tiny steps: a minimum to rounding only if the
        // scaled gradient is negligible too (else a flat or ill-computed region)
        let gmax = 0;
        for (let a = 0; a < p; a++) gmax = Math.max(gmax, Math.abs(g[a]) / Math.sqrt(Math.max(D[a], 1e-300)));
        const ok = gmax <= 1e-6 * Math.sqrt(Math.max(ssr, 1e-300));
        return { q, iterations: it + 1, converged: ok, reason: ok ? 'no further decrease possible (gradient negligible)' : `stuck with gradient ${gmax.toExponential(1)}` };
      }
    }
  }
  return { q, iterations: maxIter, converged: false, reason: 'iteration limit' };
}

function finish(
  pr: LMProblem, S: Scaled, q: Float64Array, qMin: number[], qMax: number[],
  iterations: number, converged: boolean, reason: string,
): LMResult {
  const { n, p } = S;
  const r = new Float64Array(n);
  const ssrScaled = S.residuals(q, r);
  const ssr = ssrScaled * S.ys * S.ys;
  const J = new Float64Array(n * p);
  S.jac(q, J);
  // covariance of q: s²·(JᵀJ)⁻¹ via SVD of J with unit-norm columns
  const cn = new Float64Array(p);
  for (let j = 0; j < p; j++) {
    let s = 0;
    for (let i = 0; i < n; i++) s += J[i * p + j] ** 2;
    cn[j] = Math.sqrt(s) || 1;
  }
  const M = new Matrix(n, p);
  for (let i = 0; i < n; i++) for (let j = 0; j < p; j++) M.set(i, j, J[i * p + j] / cn[j]);
  const svd = new SingularValueDecomposition(M, { computeLeftSingularVectors: false, autoTranspose: true });
  const sv = svd.diagonal, V = svd.rightSingularVectors;
  const s2 = ssrScaled / (n - p);
  const params = S.toP(q);
  const cov: number[][] = [];
  for (let a = 0; a < p; a++) {
    const row: number[] = [];
    for (let b = 0; b < p; b++) {
      let s = 0;
      for (let k = 0; k < p; k++) {
        const d = sv[k] > 1e-15 * sv[0] ? 1 / (sv[k] * sv[k]) : Infinity;
        const v = V.get(a, k) * V.get(b, k);
        if (v !== 0) s += v * d;
      }
      row.push((s2 * s * S.sc[a] * S.sc[b]) / (cn[a] * cn[b]));
    }
    cov.push(row);
  }
  const atBound = Array.from(q, (v, j) => v <= qMin[j] || v >= qMax[j]);
  const hitBound = atBound.some(Boolean);
  // a "minimum" where some parameter is not determined at all (relative SD
  // > 1e8, or a zero singular value) is a stationary point at infinity
  const degenerate = cov.some((row, j) => !(Math.sqrt(Math.max(row[j], 0)) <= 1e8 * Math.max(Math.abs(params[j]), 1e-300)));
  if (degenerate) { converged = false; reason += '; degenerate (a parameter is not determined)'; }
  return {
    params, sigmas: cov.map((row, j) => Math.sqrt(Math.max(row[j], 0))), covariance: cov,
    ssr, residualSd: Math.sqrt(ssr / (n - p)), iterations,
    converged: converged && !hitBound && Number.isFinite(ssr),
    reason: hitBound ? `${reason}; parameter on its bound` : reason,
    atBound,
  };
}
