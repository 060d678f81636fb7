/**
 * The summary of a run from its window results: weighted means of period, κ
 * and G, the decay rate and Q from the amplitudes over the whole run, and the
 * equilibrium rate — each with an uncertainty that accounts for overlapping
 * windows and for scatter beyond the error bars. The windows carry statistical
 * σ's only; the hand-measured inertia and dimensions are systematic for the run
 * and are added here, once, in quadrature (docs/analysis.md, "The run").
 */
import type { WindowResult } from '../domain/window-result.js';
import type { DeriveContext } from './derive.js';
import { tensionKappa, rectPolarOverArea, roundPolarOverArea } from '../physics/torsion.js';
import { K_BOLTZMANN } from '../physics/constants.js';
import { weightedLine, weightedMean } from './weighted-stats.js';
import { qFromDecayRate, runDecayRate } from './run-decay.js';
import { combinedRelative, kappaSystematics, shearModulusSystematics, type Systematics, type SystematicTerms } from './systematics.js';

/** Relative standard uncertainties (σ/value) of a run's κ or G by source: `statistical` and the systematic terms. */
export type SigmaBudget = SystematicTerms & { statistical: number };

export interface RunSummaryNumbers {
  windows: number;
  windows_ok: number;
  period_s: number | null;
  period_sigma_s: number | null;
  /** γ from a weighted line through ln(amplitude) over the run (run-decay.ts) */
  decay_rate_per_s: number | null;
  decay_rate_sigma_per_s: number | null;
  /** the temperature, K, at which the thermal random walk of ln A was counted in σ_γ; null when it was not (no κ or no temperature) */
  decay_rate_temperature_K: number | null;
  /** that temperature came from the run's temp_C channel (else from the options) */
  decay_rate_temperature_recorded: boolean;
  /** Q = ω₀/(2γ) from that γ, second-order unbiased */
  q: number | null;
  q_sigma: number | null;
  kappa_Nm_per_rad: number | null;
  /** total: the statistical σ of the mean and the systematic terms in quadrature */
  kappa_sigma_Nm_per_rad: number | null;
  kappa_sigma_stat_Nm_per_rad: number | null;
  kappa_sigma_budget: SigmaBudget | null;
  shear_modulus_Pa: number | null;
  shear_modulus_sigma_Pa: number | null;
  shear_modulus_sigma_stat_Pa: number | null;
  shear_modulus_sigma_budget: SigmaBudget | null;
  /** share of κ that the fibre's tension contributes (taken out of G), ppm; null without a tension or a κ */
  tension_share_ppm: number | null;
  /** equilibrium creep: weighted slope of equilibrium_rad against t_mid_s */
  equilibrium_rate_rad_per_s: number | null;
  equilibrium_rate_sigma_rad_per_s: number | null;
  amplitude_rad: number | null;
  /** mean temperature of the accepted windows, °C (null without a temp_C channel) */
  temp_C: number | null;
}

/** How to summarise: the overlap of the windows and what the station says about the pendulum and fibre. */
export interface RunSummaryOptions {
  /** window_periods / step_periods (default 1) */
  overlap?: number;
  /** nominal inertia, geometry, tension and damping model (for T₀, the systematic terms and the tension share) */
  context?: DeriveContext;
  /** the hand-measured σ's, added once */
  systematics?: Systematics;
  /**
   * the pendulum's temperature, K, when the windows carry no temp_C (whose mean is used first): with κ
   * known, the thermal wander of the amplitude enters σ_γ (run-decay.ts)
   */
  temperature_K?: number;
}

/** A total σ and its budget from a mean, its statistical σ and the systematic terms (relative). */
function withSystematics(mean: number, statSigma: number, terms: SystematicTerms): { sigma: number; budget: SigmaBudget } {
  const rel = combinedRelative(terms);
  const sys = Math.abs(mean) * rel;
  return { sigma: Math.hypot(statSigma, sys), budget: { statistical: statSigma / Math.abs(mean), ...terms } };
}

/**
 * Summarise a run's windows. Takes any iterable (e.g. rows streamed from the
 * store) and keeps only the numbers it needs, so a week-long run's windows
 * never sit in memory as objects.
 */
export function summariseWindows(ws: Iterable<WindowResult>, opts: RunSummaryOptions = {}): RunSummaryNumbers & { t_end_s: number | null } {
  const pairs = () => ({ v: [] as number[], s: [] as number[] });
  const period = pairs(), kappa = pairs(), g = pairs();
  const x: number[] = [], y: number[] = [], sy: number[] = [];
  const at: number[] = [], amp: number[] = [], sAmp: number[] = [], a0: number[] = [], a1: number[] = [];
  const put = (p: { v: number[]; s: number[] }, a: number | null, b: number | null) => {
    if (a !== null && b !== null && Number.isFinite(a) && Number.isFinite(b)) { p.v.push(a); p.s.push(b); }
  };
  let windows = 0, ok = 0;
  let amplitude: number | null = null;
  let tEnd: number | null = null;
  let tempSum = 0, tempN = 0;
  for (const w of ws) {
    windows++;
    tEnd = w.t_end_s;
    if (w.status !== 'ok') continue;
    ok++;
    put(period, w.period_s, w.period_sigma_s);
    put(kappa, w.kappa_Nm_per_rad, w.kappa_sigma_Nm_per_rad);
    put(g, w.shear_modulus_Pa, w.shear_modulus_sigma_Pa);
    if (w.equilibrium_rad !== null && w.equilibrium_sigma_rad !== null) {
      x.push(w.t_mid_s); y.push(w.equilibrium_rad); sy.push(w.equilibrium_sigma_rad);
    }
    if (w.amplitude_rad !== null && w.amplitude_sigma_rad !== null) {
      at.push(w.t_mid_s); amp.push(w.amplitude_rad); sAmp.push(w.amplitude_sigma_rad); a0.push(w.t_start_s); a1.push(w.t_end_s);
    }
    if (w.amplitude_rad !== null) amplitude = w.amplitude_rad;
    if (w.temp_C !== null && Number.isFinite(w.temp_C)) { tempSum += w.temp_C; tempN++; }
  }
  const o = Math.max(1, opts.overlap ?? 1);
  const ctx = opts.context ?? {}, sys = opts.systematics ?? {};
  const P = weightedMean(period.v, period.s, { overlap: o });
  const K = weightedMean(kappa.v, kappa.s, { overlap: o }), G = weightedMean(g.v, g.s, { overlap: o });
  const rate = weightedLine(x, y, sy, { overlap: o });
  // 0 °C = 273.15 K (SI definition)
  const TK = tempN ? tempSum / tempN + 273.15 : opts.temperature_K;
  const V = K && K.mean > 0 && TK !== undefined && TK > 0 ? (K_BOLTZMANN * TK) / K.mean : undefined;
  const decay = runDecayRate(at, amp, sAmp, { overlap: o, spans: { start: a0, end: a1 }, thermalVariance_rad2: V });

  // Q = ω₀/(2γ), ω₀ from the mean damped period under the station's damping model
  let q: { q: number; q_sigma: number } | null = null;
  if (P && decay) {
    const wd = (2 * Math.PI) / P.mean, g2 = decay.rate_per_s ** 2;
    const W = (ctx.damping ?? 'internal') === 'viscous' ? wd * wd + g2 : wd * wd - g2;
    if (W > 0) q = qFromDecayRate(decay.rate_per_s, decay.rate_sigma_per_s, Math.sqrt(W));
  }
  const kTot = K ? withSystematics(K.mean, K.sigma, kappaSystematics(ctx, sys)) : null;
  const gTerms = G && K ? shearModulusSystematics(K.mean, ctx, sys) : null;
  const gTot = G ? withSystematics(G.mean, G.sigma, gTerms ?? {}) : null;
  return {
    windows,
    windows_ok: ok,
    period_s: P?.mean ?? null,
    period_sigma_s: P?.sigma ?? null,
    decay_rate_per_s: decay?.rate_per_s ?? null,
    decay_rate_sigma_per_s: decay?.rate_sigma_per_s ?? null,
    decay_rate_temperature_K: V !== undefined && decay !== null ? TK! : null,
    decay_rate_temperature_recorded: V !== undefined && decay !== null && tempN > 0,
    q: q?.q ?? null,
    q_sigma: q?.q_sigma ?? null,
    kappa_Nm_per_rad: K?.mean ?? null,
    kappa_sigma_Nm_per_rad: kTot?.sigma ?? null,
    kappa_sigma_stat_Nm_per_rad: K?.sigma ?? null,
    kappa_sigma_budget: kTot?.budget ?? null,
    shear_modulus_Pa: G?.mean ?? null,
    shear_modulus_sigma_Pa: gTot?.sigma ?? null,
    shear_modulus_sigma_stat_Pa: G?.sigma ?? null,
    shear_modulus_sigma_budget: gTot?.budget ?? null,
    tension_share_ppm: K ? tensionShare_ppm(K.mean, ctx) : null,
    equilibrium_rate_rad_per_s: rate?.slope ?? null,
    equilibrium_rate_sigma_rad_per_s: rate?.slope_sigma ?? null,
    amplitude_rad: amplitude,
    temp_C: tempN ? tempSum / tempN : null,
    t_end_s: tEnd,
  };
}

/** The tension term F·(J/A)/L as a share of κ, ppm; null without tension or geometry. */
function tensionShare_ppm(kappa: number, ctx: DeriveContext): number | null {
  const F = ctx.tension_N, L = ctx.length_m;
  if (F === undefined || L === undefined || !(L > 0) || !(kappa > 0)) return null;
  const ja = ctx.diameter_m !== undefined ? roundPolarOverArea(ctx.diameter_m)
    : ctx.width_m !== undefined && ctx.thickness_m !== undefined ? rectPolarOverArea(ctx.width_m, ctx.thickness_m) : undefined;
  return ja === undefined ? null : (tensionKappa(F, ja, L) / kappa) * 1e6;
}
