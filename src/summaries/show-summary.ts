/** The `show` summary of one run, from what the store holds so far. */
import type Database from 'better-sqlite3';
import { getRun } from '../../db/runs.js';
import { iterateWindows } from '../../db/windows-store.js';
import { countEvents, listEvents } from '../../db/events-store.js';
import { summariseWindows } from '../analysis/run-summary.js';
import { RuntimeError } from '../domain/errors.js';

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
  q: number | null;
  q_sigma: number | null;
  equilibrium_rate_rad_per_s: number | null;
  equilibrium_rate_sigma_rad_per_s: number | null;
  kappa_Nm_per_rad?: number | null;
  kappa_sigma_Nm_per_rad?: number | null;
  shear_modulus_Pa?: number | null;
  shear_modulus_sigma_Pa?: number | null;
  amplitude_rad: number | null;
  events: number;
  alerts: { kind: string; state: string | null; t: string; message: string }[];
}

/** window_periods / step_periods of the station a run was recorded with (4, the default, when unknown). */
export function overlapOf(stationConfig: unknown): number {
  const a = (stationConfig as { analysis?: { window_periods?: number; step_periods?: number } } | null)?.analysis;
  return a && a.window_periods && a.step_periods ? a.window_periods / a.step_periods : 4;
}

/** Build the summary; throws RuntimeError when the run does not exist. */
export function buildSummary(db: Database.Database, runId: number): ShowSummary {
  const run = getRun(db, runId);
  if (!run) throw new RuntimeError(`run ${runId}: no such run in this store`);
  const overlap = overlapOf(run.station_config);
  const s = summariseWindows(iterateWindows(db, runId), overlap);
  const alerts = latestAlertStates(listEvents(db, runId));
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
    gaps: countEvents(db, runId, 'gap'),
    period_s: s.period_s,
    period_sigma_s: s.period_sigma_s,
    q: s.q,
    q_sigma: s.q_sigma,
    equilibrium_rate_rad_per_s: s.equilibrium_rate_rad_per_s,
    equilibrium_rate_sigma_rad_per_s: s.equilibrium_rate_sigma_rad_per_s,
    amplitude_rad: s.amplitude_rad,
    events: countEvents(db, runId),
    alerts,
  };
  if (s.kappa_Nm_per_rad !== null) {
    out.kappa_Nm_per_rad = s.kappa_Nm_per_rad;
    out.kappa_sigma_Nm_per_rad = s.kappa_sigma_Nm_per_rad;
  }
  if (s.shear_modulus_Pa !== null) {
    out.shear_modulus_Pa = s.shear_modulus_Pa;
    out.shear_modulus_sigma_Pa = s.shear_modulus_sigma_Pa;
  }
  return out;
}


/** The last state of each alert kind that went through a life cycle. */
function latestAlertStates(events: { kind: string; state?: string | null; t: string; message: string }[]) {
  const last = new Map<string, { kind: string; state: string | null; t: string; message: string }>();
  for (const e of events) if (e.state) last.set(e.kind, { kind: e.kind, state: e.state, t: e.t, message: e.message });
  return [...last.values()];
}
