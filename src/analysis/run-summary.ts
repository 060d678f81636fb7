/**
 * The summary of a run from its window results: weighted means of period, Q,
 * κ and G, and the equilibrium rate over the run — each with an uncertainty
 * that accounts for overlapping windows and for scatter beyond the error bars.
 */
import type { WindowResult } from '../domain/window-result.js';
import { weightedLine, weightedMean } from './weighted-stats.js';

export interface RunSummaryNumbers {
  windows: number;
  windows_ok: number;
  period_s: number | null;
  period_sigma_s: number | null;
  q: number | null;
  q_sigma: number | null;
  kappa_Nm_per_rad: number | null;
  kappa_sigma_Nm_per_rad: number | null;
  shear_modulus_Pa: number | null;
  shear_modulus_sigma_Pa: number | null;
  /** equilibrium creep: weighted slope of equilibrium_rad against t_mid_s */
  equilibrium_rate_rad_per_s: number | null;
  equilibrium_rate_sigma_rad_per_s: number | null;
  amplitude_rad: number | null;
  /** mean temperature of the accepted windows, °C (null without a temp_C channel) */
  temp_C: number | null;
}

/**
 * Summarise a run's windows; `overlap` = window_periods / step_periods. Takes
 * any iterable (e.g. rows streamed from the store) and keeps only the numbers
 * it needs, so a week-long run's windows never sit in memory as objects.
 */
export function summariseWindows(ws: Iterable<WindowResult>, overlap = 1): RunSummaryNumbers & { t_end_s: number | null } {
  const pairs = () => ({ v: [] as number[], s: [] as number[] });
  const period = pairs(), q = pairs(), kappa = pairs(), g = pairs();
  const x: number[] = [], y: number[] = [], sy: number[] = [];
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
    put(q, w.q, w.q_sigma);
    put(kappa, w.kappa_Nm_per_rad, w.kappa_sigma_Nm_per_rad);
    put(g, w.shear_modulus_Pa, w.shear_modulus_sigma_Pa);
    if (w.equilibrium_rad !== null && w.equilibrium_sigma_rad !== null) {
      x.push(w.t_mid_s); y.push(w.equilibrium_rad); sy.push(w.equilibrium_sigma_rad);
    }
    if (w.amplitude_rad !== null) amplitude = w.amplitude_rad;
    if (w.temp_C !== null && Number.isFinite(w.temp_C)) { tempSum += w.temp_C; tempN++; }
  }
  const o = Math.max(1, overlap);
  const P = weightedMean(period.v, period.s, { overlap: o }), Q = weightedMean(q.v, q.s, { overlap: o });
  const K = weightedMean(kappa.v, kappa.s, { overlap: o }), G = weightedMean(g.v, g.s, { overlap: o });
  const rate = weightedLine(x, y, sy, { overlap: o });
  return {
    windows,
    windows_ok: ok,
    period_s: P?.mean ?? null,
    period_sigma_s: P?.sigma ?? null,
    q: Q?.mean ?? null,
    q_sigma: Q?.sigma ?? null,
    kappa_Nm_per_rad: K?.mean ?? null,
    kappa_sigma_Nm_per_rad: K?.sigma ?? null,
    shear_modulus_Pa: G?.mean ?? null,
    shear_modulus_sigma_Pa: G?.sigma ?? null,
    equilibrium_rate_rad_per_s: rate?.slope ?? null,
    equilibrium_rate_sigma_rad_per_s: rate?.slope_sigma ?? null,
    amplitude_rad: amplitude,
    temp_C: tempN ? tempSum / tempN : null,
    t_end_s: tEnd,
  };
}
