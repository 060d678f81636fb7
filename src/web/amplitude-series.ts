/**
 * The swing-amplitude charts' data from `GET /api/runs/RUN/amplitude` (or the
 * report's copy): one ascending x of amplitudes in mrad — the windows' and the
 * bins' merged, each series null where the other's points are — the period
 * as its offset in ppm from the fitted line's reference period, the fitted
 * line itself, and Q; with y ranges that keep the bins, their σ and the
 * line in view and let the few most outlying windows fall off the scale.
 * Pure: no DOM.
 */
import type { AmplitudeDependence } from '../summaries/amplitude-dependence.js';

/** Per-window and per-bin series on one x. */
export interface AmplitudeSeries {
  /** swing amplitude, mrad, ascending */
  x: number[];
  /** period − reference, ppm: per window, per bin (with σ), and the fitted line */
  period: { windows: (number | null)[]; bins: (number | null)[]; binSigma: (number | null)[]; line: (number | null)[] };
  q: { windows: (number | null)[]; bins: (number | null)[]; binSigma: (number | null)[] };
  /** the reference period, s: the fitted line's, else the windows' median (null without windows) */
  ref_s: number | null;
  /** y ranges (null when nothing to draw) */
  periodRange: [number, number] | null;
  qRange: [number, number] | null;
  /** windows drawn (amplitude above zero) */
  windows: number;
}

const finite = (v: number | null | undefined): v is number => typeof v === 'number' && Number.isFinite(v);

function median(xs: number[]): number | null {
  if (!xs.length) return null;
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/** The value at fraction p of the sorted values (nearest rank). */
function quantile(sorted: number[], p: number): number {
  return sorted[Math.min(sorted.length - 1, Math.max(0, Math.round(p * (sorted.length - 1))))];
}

/**
 * A y range holding every `keep` value and the windows between their 2nd and 98th
 * percentiles (all of them when fewer than 50), padded by 5 %; null when empty.
 */
export function robustRange(windows: (number | null)[], keep: number[]): [number, number] | null {
  const w = windows.filter(finite).sort((a, b) => a - b);
  const inner = w.length >= 50 ? [quantile(w, 0.02), quantile(w, 0.98)] : w;
  const all = [...inner, ...keep.filter(finite)];
  if (!all.length) return null;
  let lo = Math.min(...all), hi = Math.max(...all);
  const pad = hi > lo ? 0.05 * (hi - lo) : Math.max(Math.abs(hi) * 0.05, 1e-9);
  lo -= pad;
  hi += pad;
  return [lo, hi];
}

/** The charts' series of an amplitude dependence. */
export function amplitudeSeries(a: AmplitudeDependence): AmplitudeSeries {
  const p = a.points, b = a.bins;
  const ref = a.line?.period_ref_s ?? median(p.period_s.filter(finite));
  const ppm = (v: number | null | undefined) => (finite(v) && ref ? ((v - ref) / ref) * 1e6 : null);
  const ppmSigma = (v: number | null | undefined) => (finite(v) && ref ? (v / ref) * 1e6 : null);
  const slope = a.period_amplitude_slope_s_per_rad;
  const lineAt = (amp_rad: number) => (a.line && finite(slope) && ref ? ((slope * (amp_rad - a.line.amplitude_ref_rad)) / ref) * 1e6 : null);
  // windows (kind 0) and bins (kind 1) in one ascending order of amplitude; a log axis takes only amplitudes above zero
  const order: { amp: number; kind: 0 | 1; i: number }[] = [];
  p.amplitude_rad.forEach((amp, i) => finite(amp) && amp > 0 && order.push({ amp, kind: 0, i }));
  b.amplitude_rad.forEach((amp, i) => finite(amp) && amp > 0 && order.push({ amp, kind: 1, i }));
  order.sort((u, v) => u.amp - v.amp || u.kind - v.kind);
  const out: AmplitudeSeries = {
    x: [], period: { windows: [], bins: [], binSigma: [], line: [] }, q: { windows: [], bins: [], binSigma: [] },
    ref_s: ref, periodRange: null, qRange: null, windows: 0,
  };
  for (const o of order) {
    const w = o.kind === 0;
    out.x.push(o.amp * 1e3);
    out.period.windows.push(w ? ppm(p.period_s[o.i]) : null);
    out.period.bins.push(w ? null : ppm(b.period_s[o.i]));
    out.period.binSigma.push(w ? null : ppmSigma(b.period_sigma_s[o.i]));
    out.period.line.push(lineAt(o.amp));
    out.q.windows.push(w ? p.q[o.i] : null);
    out.q.bins.push(w ? null : b.q[o.i]);
    out.q.binSigma.push(w ? null : b.q_sigma[o.i]);
    if (w) out.windows++;
  }
  const around = (v: (number | null)[], s: (number | null)[]) => v.flatMap((y, i) => (finite(y) ? [y - (s[i] ?? 0), y + (s[i] ?? 0)] : []));
  out.periodRange = robustRange(out.period.windows, [...around(out.period.bins, out.period.binSigma), ...out.period.line.filter(finite)]);
  out.qRange = robustRange(out.q.windows, around(out.q.bins, out.q.binSigma));
  return out;
}
