/**
 * The report's swing-amplitude dependence and configuration comparison: the
 * summaries the dashboard's API gives, made small enough to inline. The
 * per-window points of the amplitude dependence are thinned to every k-th
 * window (a week has ten thousand; the bins, which carry the statistics, are
 * kept whole) and rounded to what a chart shows. A summary that cannot be made
 * is left out with a note rather than failing the whole report.
 */
import type { ReadStore } from '../../db/read-store.js';
import { amplitudeDependence, type AmplitudeDependence } from '../summaries/amplitude-dependence.js';
import { buildComparison, type CompareOptions, type Comparison } from '../summaries/compare-summary.js';

/** Most per-window points inlined (default of reportAmplitude). */
export const MAX_AMPLITUDE_POINTS = 2000;

/** Significant digits kept per point field: the period to better than 0.01 ppm, as the window columns. */
const DIGITS = { t_mid_s: 10, amplitude_rad: 7, period_s: 12, period_sigma_s: 3, q: 6, q_sigma: 3 } as const;

const round = (x: number, digits: number): number => (x === 0 || !Number.isFinite(x) ? x : Number(x.toPrecision(digits)));

/** Every k-th of the points (k the smallest that keeps at most `max`), rounded. */
export function thinPoints(p: AmplitudeDependence['points'], max: number): AmplitudeDependence['points'] {
  const n = p.amplitude_rad.length;
  const k = Math.max(1, Math.ceil(n / Math.max(1, max)));
  const pick = <T extends number | null>(xs: T[], digits: number): T[] => {
    const out: T[] = [];
    for (let i = 0; i < n; i += k) out.push((xs[i] === null ? null : round(xs[i] as number, digits)) as T);
    return out;
  };
  return {
    t_mid_s: pick(p.t_mid_s, DIGITS.t_mid_s), amplitude_rad: pick(p.amplitude_rad, DIGITS.amplitude_rad), period_s: pick(p.period_s, DIGITS.period_s),
    period_sigma_s: pick(p.period_sigma_s, DIGITS.period_sigma_s), q: pick(p.q, DIGITS.q), q_sigma: pick(p.q_sigma, DIGITS.q_sigma),
  };
}

/** The run's amplitude dependence for the report (null when no window has an amplitude and a period), and how many windows it used. */
export async function reportAmplitude(store: ReadStore, run: number, maxPoints = MAX_AMPLITUDE_POINTS): Promise<{ amplitude: AmplitudeDependence | null; windows: number; note: string }> {
  try {
    const a = await amplitudeDependence(store, run);
    const windows = a.points.amplitude_rad.length;
    if (!windows) return { amplitude: null, windows, note: 'no window with a fitted amplitude and period' };
    return { amplitude: { ...a, points: thinPoints(a.points, maxPoints) }, windows, note: '' };
  } catch (e) {
    return { amplitude: null, windows: 0, note: `no swing-amplitude dependence: ${(e as Error).message}` };
  }
}

/** The run's comparison of configurations for the report (null when the run has neither a state channel nor marks: nothing to compare). */
export async function reportComparison(store: ReadStore, run: number, span: Pick<CompareOptions, 'from_s' | 'to_s'> = {}): Promise<{ compare: Comparison | null; note: string }> {
  try {
    const c = await buildComparison(store, run, span);
    if (c.source === 'none') return { compare: null, note: c.notes.find((n) => /one configuration/.test(n)) ?? 'no state channel and no marks: one configuration, nothing to compare' };
    return { compare: c, note: '' };
  } catch (e) {
    return { compare: null, note: `no comparison of configurations: ${(e as Error).message}` };
  }
}
