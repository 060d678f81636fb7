/**
 * Fit benchmark: median time of one damped-sine window (4 periods, 4,800
 * samples) with the FFT seed, the fit alone, and the generic library path
 * for comparison; then the Monte-Carlo noise-limit ratios (scatter over the
 * Cramér–Rao bound, reported over empirical σ). `npx tsx bench/fit.ts`.
 */
import { pathToFileURL } from 'node:url';
import { fisherBound } from '../test/helpers/crlb.js';
import { fitDampedSine } from '../src/analysis/damped-sine.js';
import { Rng } from '../src/analysis/rng.js';
import { fitLM } from '../src/analysis/lm.js';
import { periodSeed } from '../src/analysis/period-seed.js';

function window(n: number, periods: number, T: number, A: number, sigma: number, Q: number, seed: number) {
  const rng = new Rng(seed);
  const dt = (T * periods) / n, tau = (Q * T) / Math.PI;
  const t = new Float64Array(n), y = new Float64Array(n);
  const tMid = 0.5 * (n - 1) * dt;
  for (let i = 0; i < n; i++) {
    t[i] = i * dt;
    const u = t[i] - tMid;
    y[i] = 0.01 + A * Math.exp(-u / tau) * Math.cos((2 * Math.PI * u) / T + 0.7) + sigma * rng.normal();
  }
  return { t, y, tMid, tau };
}

function median(f: () => void, reps: number, warm = 30): number {
  for (let i = 0; i < warm; i++) f();
  const ts: number[] = [];
  for (let i = 0; i < reps; i++) { const t0 = performance.now(); f(); ts.push(performance.now() - t0); }
  ts.sort((a, b) => a - b);
  return ts[reps >> 1];
}

/** median process CPU time per call, ms (less sensitive than wall time to other load on the machine) */
function medianCpu(f: () => void, reps: number, warm = 30): number {
  for (let i = 0; i < warm; i++) f();
  const ts: number[] = [];
  for (let i = 0; i < reps; i++) { const c0 = process.cpuUsage(); f(); const c = process.cpuUsage(c0); ts.push((c.user + c.system) / 1000); }
  ts.sort((a, b) => a - b);
  return ts[reps >> 1];
}

const sd = (v: number[]) => { const m = v.reduce((a, b) => a + b, 0) / v.length; return Math.sqrt(v.reduce((a, b) => a + (b - m) ** 2, 0) / (v.length - 1)); };
const mean = (v: number[]) => v.reduce((a, b) => a + b, 0) / v.length;

/** Time the window fit and print the Monte-Carlo noise-limit ratios; returns the figures. */
export async function benchFit(): Promise<Record<string, number>> {
  const out: Record<string, number> = {};
  const w = window(4800, 4, 60, 1e-3, 1e-5, 1000, 1);
  const seed = periodSeed(w.t, w.y);
  out.fit_window_4800_median_ms = median(() => fitDampedSine(w.t, w.y), 200);
  out.fit_window_4800_median_cpu_ms = medianCpu(() => fitDampedSine(w.t, w.y), 200);
  out.load_average_1min = (await import('node:os')).loadavg()[0];
  out.seed_window_4800_median_ms = median(() => periodSeed(w.t, w.y), 200);
  out.fit_given_seed_4800_median_ms = median(() => fitDampedSine(w.t, w.y, { seed }), 200);
  // the same problem through ml-levenberg-marquardt (library stage only), for comparison
  const f = fitDampedSine(w.t, w.y);
  const model = ([eq, d, A, phi, T, g]: number[]) => (x: number) => {
    const u = x - w.tMid;
    return eq + d * u + A * Math.exp(-g * u) * Math.cos((2 * Math.PI * u) / T + phi);
  };
  const jacobian = ([, , A, phi, T, g]: number[]) => (x: number) => {
    const u = x - w.tMid, e = Math.exp(-g * u), psi = (2 * Math.PI * u) / T + phi;
    const c = Math.cos(psi), s = Math.sin(psi);
    return [1, u, e * c, -A * e * s, (A * e * s * 2 * Math.PI * u) / (T * T), -u * A * e * c];
  };
  const p0 = [seed.equilibrium, seed.drift_per_s, seed.amplitude, seed.phase_rad, seed.period_s, 0];
  out.library_lm_4800_median_ms = median(() => fitLM({ x: w.t, y: w.y, model, jacobian, p0, scale: [1e-3, 1e-5, 1e-3, 1, 60, 1e-3] }, { libraryOnly: true }), 5, 1);
  out.fit_iterations = f.iterations;

  // Monte Carlo at the noise limit: T = 60 s, Q = 1000, 4 periods × 20 samples, A/σ = 50
  const R = 1000, n = 80, sigma = 2e-5;
  const mc = window(n, 4, 60, 1e-3, 0, 1000, 0);
  const clean = mc.y;
  const bound = fisherBound(mc.t, { equilibrium_rad: 0.01, drift_rad_per_s: 0, amplitude_rad: 1e-3, phase_rad: 0.7, period_s: 60, decay_time_s: mc.tau }, sigma, mc.tMid);
  const rng = new Rng(7);
  const y = new Float64Array(n);
  const P: number[] = [], E: number[] = [], sP: number[] = [], sE: number[] = [], S: number[] = [];
  const t0 = performance.now();
  for (let r = 0; r < R; r++) {
    for (let i = 0; i < n; i++) y[i] = clean[i] + sigma * rng.normal();
    const g = fitDampedSine(mc.t, y);
    if (g.status === 'ok') { P.push(g.period_s!); E.push(g.equilibrium_rad!); sP.push(g.period_sigma_s!); sE.push(g.equilibrium_sigma_rad!); }
    const s = periodSeed(mc.t, y);
    if (s.ok) S.push(s.period_s);
  }
  out.mc_windows = R;
  out.mc_fit_per_window_ms = (performance.now() - t0) / R;
  out.mc_rejected = R - P.length;
  out.period_sd_over_crlb = sd(P) / bound.period_sigma_s;
  out.equilibrium_sd_over_crlb = sd(E) / bound.equilibrium_sigma_rad;
  out.period_reported_over_empirical = mean(sP) / sd(P);
  out.equilibrium_reported_over_empirical = mean(sE) / sd(E);
  out.period_bias_over_sd = (mean(P) - 60) / sd(P);
  out.seed_period_sd_over_crlb = sd(S) / bound.period_sigma_s;
  out.seed_period_rms_error_over_crlb = Math.sqrt(mean(S.map((v) => (v - 60) ** 2))) / bound.period_sigma_s;
  for (const [k, v] of Object.entries(out)) process.stdout.write(`${k.padEnd(40)} ${Number(v.toPrecision(4))}\n`);
  return out;
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  benchFit().catch((e) => { process.stderr.write(`${(e as Error).stack ?? e}\n`); process.exitCode = 1; });
}
