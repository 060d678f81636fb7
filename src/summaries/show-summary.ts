/** The `show` summary of one run, from what the store holds so far. */
import type { ReadStore } from '../../db/read-store.js';
import { summariseWindows, type SigmaBudget } from '../analysis/run-summary.js';
import { RuntimeError } from '../domain/errors.js';
import { summaryOptionsOf } from './summary-options.js';
import type { Damping } from '../physics/thermal.js';
import { noiseHeadline, type NoiseHeadline } from './noise-headline.js';
import { segmentStoredRun } from './configurations.js';
import { amplitudeSlopeOf, periodAlertSpans } from './amplitude-dependence.js';
import { runWarnings, type RunWarning } from './run-warnings.js';
import { storedStation } from './summary-options.js';

// the station a run was recorded with, as its summaries read it (kept importable from here)
export { overlapOf, storedStation, summaryOptionsOf } from './summary-options.js';

export interface ShowSummary {
  run: number;
  station: string;
  fibre: string;
  started_at: string | null;
  ended_at: string | null;
  status: string;
  source: string | null;
  samples: number;
  duration_s: number | null;
  windows: number;
  windows_ok: number;
  gaps: number;
  period_s: number | null;
  period_sigma_s: number | null;
  /** from the amplitudes over the whole run (docs/analysis.md, "The run's Q") */
  decay_rate_per_s: number | null;
  decay_rate_sigma_per_s: number | null;
  q: number | null;
  q_sigma: number | null;
  equilibrium_rate_rad_per_s: number | null;
  equilibrium_rate_sigma_rad_per_s: number | null;
  /** total σ (statistical and systematic in quadrature), its statistical part and the relative budget by source */
  kappa_Nm_per_rad?: number | null;
  kappa_sigma_Nm_per_rad?: number | null;
  kappa_sigma_stat_Nm_per_rad?: number | null;
  kappa_sigma_budget?: SigmaBudget | null;
  shear_modulus_Pa?: number | null;
  shear_modulus_sigma_Pa?: number | null;
  shear_modulus_sigma_stat_Pa?: number | null;
  shear_modulus_sigma_budget?: SigmaBudget | null;
  /** the damping model T₀ (hence κ and Q) was worked out with */
  damping: Damping;
  /** the fibre's tension from pendulum.mass_kg, N, and its share of κ (taken out of G), ppm; null without a mass */
  tension_N: number | null;
  tension_share_ppm: number | null;
  /**
   * the temperature at which the amplitude's thermal wander entered q_sigma (null: not counted, no κ), and
   * where it came from: the run's temp_C, environment.temperature_K, or assumed (295 K)
   */
  temperature_K: number | null;
  temperature_source: 'recorded' | 'station' | 'assumed' | null;
  amplitude_rad: number | null;
  /**
   * the period's dependence on the swing amplitude, s/rad (anelasticity; 0 for an elastic fibre), from the ok
   * windows outside configuration changes, one intercept per configuration, the temperature term removed when
   * temp_C is recorded (then ..._temperature_removed is true); null when it cannot be fitted
   */
  period_amplitude_slope_s_per_rad: number | null;
  period_amplitude_slope_sigma_s_per_rad: number | null;
  period_amplitude_slope_temperature_removed: boolean;
  /** sanity checks of the derived constants against the station file (src/summaries/run-warnings.ts) */
  warnings: RunWarning[];
  /** the noise headline from the windows and the thermal limits (the full budget: `noise RUN`) */
  noise: NoiseHeadline;
  events: number;
  alerts: { kind: string; state: string | null; t: string; message: string }[];
  /** the run's uid and its number in its station's store (docs/archive.md) */
  uid: string;
  station_run: number;
  /** the lab archive's standing for this run: last sync, last sample it holds, seconds behind (null: never synced) */
  archive_synced_at: string | null;
  archive_synced_to_s: number | null;
  archive_lag_s: number | null;
}

/** Build the summary; throws RuntimeError when the run does not exist. */
export async function buildSummary(store: ReadStore, runId: number): Promise<ShowSummary> {
  const run = await store.getRun(runId);
  if (!run) throw new RuntimeError(`run ${runId}: no such run in this store`);
  const opts = summaryOptionsOf(run.station_config);
  const windows = await store.listWindows(runId);
  const s = summariseWindows(windows, opts);
  const events = await store.listEvents(runId);
  const alerts = latestAlertStates(events);
  const { segmentation } = await segmentStoredRun(store, run, windows, s.period_s);
  const slope = amplitudeSlopeOf(windows, segmentation, opts.overlap ?? 1, periodAlertSpans(events));
  const out: ShowSummary = {
    run: run.run,
    station: run.station,
    fibre: run.fibre,
    started_at: run.started_at,
    ended_at: run.ended_at,
    status: run.status,
    source: run.source ?? null,
    samples: run.samples,
    // the span from start to end; a run still open: up to its last window so far
    duration_s: run.ended_at_ms !== null ? (run.ended_at_ms - run.started_at_ms) / 1000 : s.t_end_s,
    windows: s.windows,
    windows_ok: s.windows_ok,
    gaps: await store.countEvents(runId, 'gap'),
    period_s: s.period_s,
    period_sigma_s: s.period_sigma_s,
    decay_rate_per_s: s.decay_rate_per_s,
    decay_rate_sigma_per_s: s.decay_rate_sigma_per_s,
    q: s.q,
    q_sigma: s.q_sigma,
    equilibrium_rate_rad_per_s: s.equilibrium_rate_rad_per_s,
    equilibrium_rate_sigma_rad_per_s: s.equilibrium_rate_sigma_rad_per_s,
    damping: opts.context?.damping ?? 'internal',
    tension_N: opts.context?.tension_N ?? null,
    tension_share_ppm: s.tension_share_ppm,
    temperature_K: s.decay_rate_temperature_K,
    temperature_source: s.decay_rate_temperature_K === null ? null : s.decay_rate_temperature_recorded ? 'recorded' : opts.temperatureAssumed ? 'assumed' : 'station',
    amplitude_rad: s.amplitude_rad,
    period_amplitude_slope_s_per_rad: slope?.slope_s_per_rad ?? null,
    period_amplitude_slope_sigma_s_per_rad: slope?.slope_sigma_s_per_rad ?? null,
    period_amplitude_slope_temperature_removed: slope?.temperature_coefficient_s_per_K != null,
    warnings: runWarnings(storedStation(run.station_config), s, windows),
    noise: noiseHeadline(windows, {
      kappa_Nm_per_rad: s.kappa_Nm_per_rad, q: s.q, inertia_kg_m2: opts.context?.inertia_kg_m2,
      temperature_K: s.decay_rate_temperature_K ?? opts.temperature_K ?? 295, damping: opts.context?.damping ?? 'internal',
    }),
    events: await store.countEvents(runId),
    alerts,
    uid: run.uid,
    station_run: run.station_run,
    ...(await store.archiveState(runId)),
  };
  if (s.kappa_Nm_per_rad !== null) {
    out.kappa_Nm_per_rad = s.kappa_Nm_per_rad;
    out.kappa_sigma_Nm_per_rad = s.kappa_sigma_Nm_per_rad;
    out.kappa_sigma_stat_Nm_per_rad = s.kappa_sigma_stat_Nm_per_rad;
    out.kappa_sigma_budget = s.kappa_sigma_budget;
  }
  if (s.shear_modulus_Pa !== null) {
    out.shear_modulus_Pa = s.shear_modulus_Pa;
    out.shear_modulus_sigma_Pa = s.shear_modulus_sigma_Pa;
    out.shear_modulus_sigma_stat_Pa = s.shear_modulus_sigma_stat_Pa;
    out.shear_modulus_sigma_budget = s.shear_modulus_sigma_budget;
  }
  return out;
}


/** The last state of each alert kind that went through a life cycle. */
function latestAlertStates(events: { kind: string; state?: string | null; t: string; message: string }[]) {
  const last = new Map<string, { kind: string; state: string | null; t: string; message: string }>();
  for (const e of events) if (e.state) last.set(e.kind, { kind: e.kind, state: e.state, t: e.t, message: e.message });
  return [...last.values()];
}
