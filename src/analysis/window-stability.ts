/**
 * The stability of a run's window results: the overlapping Allan deviation
 * (src/analysis/allan-deviation.ts) of the windows' equilibria and of their
 * fractional period, τ in multiples of the window step. Needs only the stored
 * windows, so a summary can afford it: one pass, a few numbers per window.
 *
 * The series is laid on the step grid: each window's slot is the previous
 * one's plus its distance in steps, rounded (so a slowly changing period does
 * not walk the grid off by a slot over ten thousand windows), a rejected
 * window or a gap leaves NaN slots, and terms touching one are left out.
 * Overlapping windows (window_periods > step_periods) share samples, so at
 * τ = one step the deviations come out below those of independent windows.
 * The fractional period is T/T_ref − 1 with T_ref the median damped period of
 * the ok windows.
 */
import type { WindowResult } from '../domain/window-result.js';
import { overlappingAllan, type AllanDeviation } from './allan-deviation.js';
import { median } from './median.js';

/** What window-stability reads of a window. */
export type StabilityWindow = Pick<WindowResult, 't_mid_s' | 'status' | 'equilibrium_rad' | 'period_s'>;

/** Allan deviations of equilibrium (rad) and fractional period (dimensionless), as docs/commands.md's `noise --json` gives them. */
export interface WindowStability {
  equilibrium: { tau_s: number[]; adev_rad: number[]; n: number[] };
  period: { tau_s: number[]; adev: number[]; n: number[] };
  /** the window step, s (median distance between consecutive windows' middles); null with fewer than two windows */
  step_s: number | null;
  /** median damped period of the ok windows, s */
  period_ref_s: number | null;
}

/** Overlapping Allan deviations of equilibria and fractional periods of `windows` (in time order). */
export function windowStability(windows: Iterable<StabilityWindow>): WindowStability {
  const t: number[] = [], eq: number[] = [], per: number[] = [];
  for (const w of windows) {
    t.push(w.t_mid_s);
    const ok = w.status === 'ok' && w.equilibrium_rad !== null && w.period_s !== null;
    eq.push(ok ? w.equilibrium_rad! : NaN);
    per.push(ok ? w.period_s! : NaN);
  }
  const empty: WindowStability = { equilibrium: { tau_s: [], adev_rad: [], n: [] }, period: { tau_s: [], adev: [], n: [] }, step_s: null, period_ref_s: null };
  const gaps: number[] = [];
  for (let i = 1; i < t.length; i++) if (t[i] > t[i - 1]) gaps.push(t[i] - t[i - 1]);
  const step = median(gaps);
  const ref = median(per.filter((p) => Number.isFinite(p)));
  if (!(step > 0)) return { ...empty, period_ref_s: Number.isFinite(ref) ? ref : null };
  // slots on the step grid
  const slot = new Array<number>(t.length);
  slot[0] = 0;
  for (let i = 1; i < t.length; i++) slot[i] = slot[i - 1] + Math.max(0, Math.round((t[i] - t[i - 1]) / step));
  const M = t.length ? slot[t.length - 1] + 1 : 0;
  const yEq = new Float64Array(M).fill(NaN);
  const yT = new Float64Array(M).fill(NaN);
  for (let i = 0; i < t.length; i++) {
    // two windows in one slot (times that do not advance): the later one is kept
    yEq[slot[i]] = eq[i];
    yT[slot[i]] = Number.isFinite(per[i]) ? per[i] / ref - 1 : NaN;
  }
  const a: AllanDeviation = overlappingAllan(yEq, step);
  const b: AllanDeviation = overlappingAllan(yT, step);
  return {
    equilibrium: { tau_s: a.tau_s, adev_rad: a.adev, n: a.n },
    period: { tau_s: b.tau_s, adev: b.adev, n: b.n },
    step_s: step,
    period_ref_s: Number.isFinite(ref) ? ref : null,
  };
}
