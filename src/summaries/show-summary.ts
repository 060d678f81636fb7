/** The `show` summary of one run, from what the store holds so far. */
import type { ReadStore } from '../../db/read-store.js';
import { summariseWindows, type RunSummaryOptions, type SigmaBudget } from '../analysis/run-summary.js';
import { RuntimeError } from '../domain/errors.js';
import { parseStation, type Station } from '../config/station.js';
import { deriveContextFor, systematicsFor, temperatureFor } from '../config/derive-context.js';
import type { Damping } from '../physics/thermal.js';
import { noiseHeadline, type NoiseHeadline } from './noise-headline.js';

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
  /** the noise headline from the windows and the thermal limits (the full budget: `noise RUN`) */
  noise: NoiseHeadline;
  events: number;
  alerts: { kind: string; state: string | null; t: string; message: string }[];
}

/** window_periods / step_periods of the station a run was recorded with (4, the default, when unknown). */
export function overlapOf(stationConfig: unknown): number {
  const a = (stationConfig as { analysis?: { window_periods?: number; step_periods?: number } } | null)?.analysis;
  return a && a.window_periods && a.step_periods ? a.window_periods / a.step_periods : 4;
}

/** The station a run was recorded with, as stored with it; null when there is none or it no longer validates. */
export function storedStation(stationConfig: unknown): Station | null {
  if (stationConfig === null || typeof stationConfig !== 'object') return null;
  try {
    return parseStation(stationConfig, 'stored station');
  } catch {
    return null;
  }
}

/** Overlap, nominal context and systematic σ's of a run, from the station stored with it. */
export function summaryOptionsOf(stationConfig: unknown): RunSummaryOptions & { temperatureAssumed?: boolean } {
  const st = storedStation(stationConfig);
  if (!st) return { overlap: overlapOf(stationConfig) };
  const T = temperatureFor(st);
  return {
    overlap: st.analysis.window_periods / st.analysis.step_periods, context: deriveContextFor(st), systematics: systematicsFor(st),
    temperature_K: T.temperature_K, temperatureAssumed: T.assumed,
  };
}

/** Build the summary; throws RuntimeError when the run does not exist. */
export async function buildSummary(store: ReadStore, runId: number): Promise<ShowSummary> {
  const run = await store.getRun(runId);
  if (!run) throw new RuntimeError(`run ${runId}: no such run in this store`);
  const opts = summaryOptionsOf(run.station_config);
  const windows = await store.listWindows(runId);
  const s = summariseWindows(windows, opts);
  const alerts = latestAlertStates(await store.listEvents(runId));
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
    noise: noiseHeadline(windows, {
      kappa_Nm_per_rad: s.kappa_Nm_per_rad, q: s.q, inertia_kg_m2: opts.context?.inertia_kg_m2,
      temperature_K: s.decay_rate_temperature_K ?? opts.temperature_K ?? 295, damping: opts.context?.damping ?? 'internal',
    }),
    events: await store.countEvents(runId),
    alerts,
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
