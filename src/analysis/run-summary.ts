/**
 * The summary of a run from its window results: weighted means of period, Q,
 * κ and G, and the equilibrium rate over the run — each with an uncertainty
 * that accounts for overlapping windows and for scatter beyond the error bars.
 */
import type { WindowResult } from '../config/results.js';

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
  equilibrium_rate_rad_per_s: number | null;
  equilibrium_rate_sigma_rad_per_s: number | null;
  amplitude_rad: number | null;
}

/**
 * Weighted mean with σ. Overlapping windows share samples, so N windows carry
 * only about N·step/window independent ones: the internal σ is inflated by
 * √(overlap). Scatter beyond the error bars (Birge ratio > 1) inflates it further.
 */
export function weightedMean(v: number[], s: number[], overlap = 1): { mean: number; sigma: number } | null {
  let sw = 0, swx = 0;
  for (let i = 0; i < v.length; i++) {
    if (!(s[i] > 0) || !Number.isFinite(v[i])) continue;
    const w = 1 / (s[i] * s[i]);
    sw += w;
    swx += w * v[i];
  }
  if (sw === 0) return null;
  const mean = swx / sw;
  let chi2 = 0, n = 0;
  for (let i = 0; i < v.length; i++) {
    if (!(s[i] > 0) || !Number.isFinite(v[i])) continue;
    chi2 += ((v[i] - mean) / s[i]) ** 2;
    n++;
  }
  const birge = n > 1 ? Math.sqrt(chi2 / (n - 1) / overlap) : 1;
  return { mean, sigma: Math.sqrt(overlap / sw) * Math.max(1, birge) };
}

/**
 * Weighted straight line y = a + b·x with σ(b), Birge-scaled and overlap-inflated
 * like `weightedMean`.
 */
export function weightedSlope(x: number[], y: number[], s: number[], overlap = 1): { slope: number; sigma: number } | null {
  let S = 0, Sx = 0, Sy = 0, Sxx = 0, Sxy = 0, n = 0;
  for (let i = 0; i < x.length; i++) {
    if (!(s[i] > 0) || !Number.isFinite(y[i])) continue;
    const w = 1 / (s[i] * s[i]);
    S += w; Sx += w * x[i]; Sy += w * y[i]; Sxx += w * x[i] * x[i]; Sxy += w * x[i] * y[i];
    n++;
  }
  const D = S * Sxx - Sx * Sx;
  if (n < 3 || !(D > 0)) return null;
  const b = (S * Sxy - Sx * Sy) / D;
  const a = (Sxx * Sy - Sx * Sxy) / D;
  let chi2 = 0;
  for (let i = 0; i < x.length; i++) {
    if (!(s[i] > 0) || !Number.isFinite(y[i])) continue;
    chi2 += ((y[i] - a - b * x[i]) / s[i]) ** 2;
  }
  const birge = Math.sqrt(chi2 / (n - 2) / overlap);
  return { slope: b, sigma: Math.sqrt((overlap * S) / D) * Math.max(1, birge) };
}

/** Summarise a run's windows; `overlap` = window_periods / step_periods. */
export function summariseWindows(ws: WindowResult[], overlap = 1): RunSummaryNumbers {
  const ok = ws.filter((w) => w.status === 'ok');
  const pick = (f: (w: WindowResult) => number | null, g: (w: WindowResult) => number | null) => {
    const v: number[] = [], s: number[] = [];
    for (const w of ok) {
      const a = f(w), b = g(w);
      if (a !== null && b !== null && Number.isFinite(a) && Number.isFinite(b)) { v.push(a); s.push(b); }
    }
    return weightedMean(v, s, Math.max(1, overlap));
  };
  const period = pick((w) => w.period_s, (w) => w.period_sigma_s);
  const q = pick((w) => w.q, (w) => w.q_sigma);
  const kappa = pick((w) => w.kappa_Nm_per_rad, (w) => w.kappa_sigma_Nm_per_rad);
  const g = pick((w) => w.shear_modulus_Pa, (w) => w.shear_modulus_sigma_Pa);
  const x: number[] = [], y: number[] = [], s: number[] = [];
  for (const w of ok) {
    if (w.equilibrium_rad !== null && w.equilibrium_sigma_rad !== null) {
      x.push(w.t_mid_s); y.push(w.equilibrium_rad); s.push(w.equilibrium_sigma_rad);
    }
  }
  const rate = weightedSlope(x, y, s, Math.max(1, overlap));
  const amps = ok.map((w) => w.amplitude_rad).filter((a): a is number => a !== null);
  return {
    windows: ws.length,
    windows_ok: ok.length,
    period_s: period?.mean ?? null,
    period_sigma_s: period?.sigma ?? null,
    q: q?.mean ?? null,
    q_sigma: q?.sigma ?? null,
    kappa_Nm_per_rad: kappa?.mean ?? null,
    kappa_sigma_Nm_per_rad: kappa?.sigma ?? null,
    shear_modulus_Pa: g?.mean ?? null,
    shear_modulus_sigma_Pa: g?.sigma ?? null,
    equilibrium_rate_rad_per_s: rate?.slope ?? null,
    equilibrium_rate_sigma_rad_per_s: rate?.sigma ?? null,
    amplitude_rad: amps.length ? amps[amps.length - 1] : null,
  };
}
