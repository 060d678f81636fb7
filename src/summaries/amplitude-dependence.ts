/**
 * How a run's period and Q depend on the swing amplitude (anelasticity): the
 * slope of period against amplitude that `show` and `fibre` report, and the
 * data behind it as arrays for the report's plots — each window's amplitude,
 * period and Q, and the same binned by amplitude, with Q per bin from the
 * bin's mean decay rate (src/analysis/run-decay.ts's qFromDecayRate, so the
 * bins are not biased by the 1/γ of noisy windows).
 *
 * Windows that straddle a configuration change or start within the settling
 * time after one are left out, and each configuration has its own intercept
 * (a source mass moves the period too); so are the windows while period-drift
 * was raised (a period step from something else — a shield touching — falls
 * where the swing happens to be and would be taken for a slope; the watcher
 * itself allows for the amplitude, so anelasticity alone does not raise it),
 * and then those whose period lies 5 robust σ's off the fit. The temperature
 * term is removed when temp_C is recorded (src/analysis/amplitude-slope.ts).
 */
import type { ReadStore } from '../../db/read-store.js';
import type { WindowResult } from '../domain/window-result.js';
import { RuntimeError } from '../domain/errors.js';
import type { Segmentation } from '../analysis/configuration-segments.js';
import { fitAmplitudeSlope, periodAmplitude, type AmplitudeSlope } from '../analysis/amplitude-slope.js';
import { weightedMean } from '../analysis/weighted-stats.js';
import { qFromDecayRate } from '../analysis/run-decay.js';
import { summariseWindows } from '../analysis/run-summary.js';
import type { Damping } from '../physics/thermal.js';
import { segmentStoredRun } from './configurations.js';
import { summaryOptionsOf } from './summary-options.js';

/** Windows whose period lies this many robust σ's off the slope are left out of it (a period step from a touching shield). */
const CLIP_SIGMAS = 5;

/** Where period-drift was raised, [raised t_s, cleared t_s] (to Infinity while still raised), from a run's events in time order. */
export function periodAlertSpans(events: readonly { kind: string; state?: string | null; t_s: number }[]): [number, number][] {
  const out: [number, number][] = [];
  let from: number | null = null;
  for (const e of events) {
    if (e.kind !== 'period-drift') continue;
    if (e.state === 'raised' && from === null) from = e.t_s;
    else if (e.state === 'cleared' && from !== null) { out.push([from, e.t_s]); from = null; }
  }
  if (from !== null) out.push([from, Infinity]);
  return out;
}

/** The windows a slope fit uses: ok, with amplitude and period, in a segment, outside period-drift alerts. */
function usedWindows(windows: readonly WindowResult[], sg: Segmentation, alerts: readonly [number, number][]): { w: WindowResult; config: number }[] {
  const out: { w: WindowResult; config: number }[] = [];
  windows.forEach((w, i) => {
    const s = sg.segmentOf[i];
    if (s < 0 || w.amplitude_rad === null || w.period_s === null || w.period_sigma_s === null) return;
    if (alerts.some(([a, b]) => w.t_mid_s >= a && w.t_mid_s <= b)) return;
    out.push({ w, config: sg.segments[s].config });
  });
  return out;
}

/** The period-amplitude slope of a run's windows (null when it cannot be fitted); `alerts` from periodAlertSpans. */
export function amplitudeSlopeOf(windows: readonly WindowResult[], sg: Segmentation, overlap: number, alerts: readonly [number, number][] = []): AmplitudeSlope | null {
  const u = usedWindows(windows, sg, alerts);
  return fitAmplitudeSlope(u.map((x) => periodAmplitude(x.w)), u.map((x) => x.w.period_s!), u.map((x) => x.w.period_sigma_s!), {
    temp_C: u.map((x) => x.w.temp_C), config: u.map((x) => x.config), overlap, clip: CLIP_SIGMAS,
  });
}

/** Period and Q against amplitude, for plots: per window and binned. */
export interface AmplitudeDependence {
  run: number;
  period_amplitude_slope_s_per_rad: number | null;
  period_amplitude_slope_sigma_s_per_rad: number | null;
  temperature_removed: boolean;
  /** the fitted line: period_ref_s + slope·(amplitude − amplitude_ref_rad), at the first configuration and the mean temperature */
  line: { amplitude_ref_rad: number; period_ref_s: number } | null;
  /** every window used; periods with the temperature term and the configuration offsets taken out */
  points: { t_mid_s: number[]; amplitude_rad: number[]; period_s: number[]; period_sigma_s: number[]; q: (number | null)[]; q_sigma: (number | null)[] };
  /** the same in amplitude bins (log spaced; bins with fewer than 3 windows dropped) */
  bins: {
    amplitude_rad: number[]; amplitude_lo_rad: number[]; amplitude_hi_rad: number[]; windows: number[];
    period_s: number[]; period_sigma_s: number[]; q: (number | null)[]; q_sigma: (number | null)[];
  };
}

/** Undamped angular frequency from a damped period and a decay rate under the damping model, rad/s (NaN if none). */
function omega0(period_s: number, rate: number, damping: Damping): number {
  const wd = (2 * Math.PI) / period_s;
  const W = damping === 'viscous' ? wd * wd + rate * rate : wd * wd - rate * rate;
  return W > 0 ? Math.sqrt(W) : NaN;
}

/** Build the amplitude dependence of a stored run; throws RuntimeError for an unknown run. */
export async function amplitudeDependence(
  store: ReadStore, runId: number, opts: { bins?: number; from_s?: number; to_s?: number } = {},
): Promise<AmplitudeDependence> {
  const run = await store.getRun(runId);
  if (!run) throw new RuntimeError(`run ${runId}: no such run in this store`);
  const so = summaryOptionsOf(run.station_config);
  const overlap = so.overlap ?? 1;
  const damping = so.context?.damping ?? 'internal';
  // a span keeps the windows wholly inside [from_s, to_s), as `compare --from-s --to-s` does
  const from = opts.from_s ?? -Infinity, to = opts.to_s ?? Infinity;
  const windows = (await store.listWindows(runId)).filter((w) => w.t_start_s >= from && w.t_end_s < to);
  const { segmentation: sg } = await segmentStoredRun(store, run, windows, summariseWindows(windows, so).period_s);
  const alerts = periodAlertSpans(await store.listEvents(runId, { kinds: ['period-drift'] }));
  const fit = amplitudeSlopeOf(windows, sg, overlap, alerts);
  const u = usedWindows(windows, sg, alerts);
  // periods corrected to the first configuration and the mean temperature, so they fall on the fitted line
  const c0 = fit ? [...fit.period_s].findIndex(Number.isFinite) : -1;
  const corr = (x: { w: WindowResult; config: number }): number => {
    if (!fit) return x.w.period_s!;
    let p = x.w.period_s! - (fit.period_s[x.config] - fit.period_s[c0]);
    if (fit.temperature_coefficient_s_per_K !== null && fit.temp_ref_C !== null && x.w.temp_C !== null) {
      p -= fit.temperature_coefficient_s_per_K * (x.w.temp_C - fit.temp_ref_C);
    }
    return p;
  };
  const points = {
    t_mid_s: u.map((x) => x.w.t_mid_s), amplitude_rad: u.map((x) => periodAmplitude(x.w)), period_s: u.map(corr),
    period_sigma_s: u.map((x) => x.w.period_sigma_s!), q: u.map((x) => x.w.q), q_sigma: u.map((x) => x.w.q_sigma),
  };
  const bins: AmplitudeDependence['bins'] = { amplitude_rad: [], amplitude_lo_rad: [], amplitude_hi_rad: [], windows: [], period_s: [], period_sigma_s: [], q: [], q_sigma: [] };
  if (u.length >= 3) {
    const amps = points.amplitude_rad.filter((a) => a > 0);
    const lo = Math.min(...amps), hi = Math.max(...amps);
    const nb = Math.max(1, Math.min(opts.bins ?? 12, Math.floor(u.length / 5)));
    const edge = (k: number) => (hi > lo ? lo * (hi / lo) ** (k / nb) : lo);
    for (let k = 0; k < nb; k++) {
      const a0 = edge(k), a1 = edge(k + 1);
      const sel = u.map((_, i) => i).filter((i) => points.amplitude_rad[i] >= a0 && (k === nb - 1 ? points.amplitude_rad[i] <= a1 : points.amplitude_rad[i] < a1));
      if (sel.length < 3) continue;
      const P = weightedMean(sel.map((i) => points.period_s[i]), sel.map((i) => points.period_sigma_s[i]), { overlap });
      const rate = weightedMean(sel.map((i) => u[i].w.decay_rate_per_s ?? NaN), sel.map((i) => u[i].w.decay_rate_sigma_per_s ?? NaN), { overlap });
      const A = weightedMean(sel.map((i) => points.amplitude_rad[i]), sel.map((i) => points.period_sigma_s[i]));
      if (!P || !A) continue;
      const q = rate ? qFromDecayRate(rate.mean, rate.sigma, omega0(P.mean, rate.mean, damping)) : null;
      bins.amplitude_rad.push(A.mean); bins.amplitude_lo_rad.push(a0); bins.amplitude_hi_rad.push(a1); bins.windows.push(sel.length);
      bins.period_s.push(P.mean); bins.period_sigma_s.push(P.sigma); bins.q.push(q?.q ?? null); bins.q_sigma.push(q?.q_sigma ?? null);
    }
  }
  return {
    run: runId,
    period_amplitude_slope_s_per_rad: fit?.slope_s_per_rad ?? null,
    period_amplitude_slope_sigma_s_per_rad: fit?.slope_sigma_s_per_rad ?? null,
    temperature_removed: fit?.temperature_coefficient_s_per_K != null,
    line: fit ? { amplitude_ref_rad: fit.amplitude_ref_rad, period_ref_s: fit.period_s[c0] } : null,
    points, bins,
  };
}

/** A stored run's period–amplitude slope as `show` and `fibre` give it (null when it resolves none). */
export async function storedRunSlope(
  store: ReadStore, r: { run: number; started_at_ms: number; ended_at_ms: number | null; station_config: unknown }, listed?: readonly WindowResult[],
): Promise<AmplitudeSlope | null> {
  const opts = summaryOptionsOf(r.station_config);
  const windows = listed ?? await store.listWindows(r.run);
  const { segmentation } = await segmentStoredRun(store, r, windows, summariseWindows(windows, opts).period_s);
  return amplitudeSlopeOf(windows, segmentation, opts.overlap ?? 1, periodAlertSpans(await store.listEvents(r.run, { kinds: ['period-drift'] })));
}

/** How many of a fibre's latest runs `fibreSlopePrior` looks through. */
const PRIOR_RUNS = 5;

/**
 * The fibre's period–amplitude slope for the period watcher of a new run:
 * from the latest of its last few runs that resolves one (|slope| ≥ 3σ), or
 * undefined (the watcher then takes the fibre as elastic until its own swing
 * has spanned enough amplitude to learn the slope).
 */
export async function fibreSlopePrior(store: ReadStore, fibre: string): Promise<{ slope_s_per_rad: number; sigma_s_per_rad: number; run: number } | undefined> {
  const runs = (await store.fibreRuns(fibre)).slice(-PRIOR_RUNS).reverse();
  for (const r of runs) {
    const s = await storedRunSlope(store, r);
    if (s && Number.isFinite(s.slope_s_per_rad) && s.slope_sigma_s_per_rad > 0 && Math.abs(s.slope_s_per_rad) >= 3 * s.slope_sigma_s_per_rad) {
      return { slope_s_per_rad: s.slope_s_per_rad, sigma_s_per_rad: s.slope_sigma_s_per_rad, run: r.run };
    }
  }
  return undefined;
}
