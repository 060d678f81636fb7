/**
 * One fibre's history across its runs (`fibrewatch fibre NAME`): each run
 * summarised exactly as `show` does (src/analysis/run-summary.ts), and whether
 * κ moved beyond its uncertainty since the previous run that had one.
 */
import type Database from 'better-sqlite3';
import { fibreRuns } from '../../db/fibres.js';
import { iterateWindows } from '../../db/windows-store.js';
import { summariseWindows, type RunSummaryNumbers } from '../analysis/run-summary.js';
import { overlapOf } from './show-summary.js';

/** One run of a fibre, summarised from its 'ok' windows as `show` does (SI units). */
export interface FibreHistoryRow extends Pick<RunSummaryNumbers,
  'windows' | 'windows_ok' | 'period_s' | 'period_sigma_s' | 'q' | 'kappa_Nm_per_rad' | 'kappa_sigma_Nm_per_rad'
  | 'shear_modulus_Pa' | 'shear_modulus_sigma_Pa' | 'equilibrium_rate_rad_per_s' | 'equilibrium_rate_sigma_rad_per_s' | 'temp_C'> {
  run: number;
  station: string;
  started_at: string;
  ended_at: string | null;
  status: string;
  samples: number;
  /** κ moved beyond its uncertainty since the previous run with a κ; null when either has none */
  kappa_moved: boolean | null;
}

const iso = (ms: number | null): string | null => (ms === null ? null : new Date(ms).toISOString());

/** The history rows, oldest run first (none for an unknown fibre). */
export function fibreHistory(db: Database.Database, name: string): FibreHistoryRow[] {
  let prev: { mean: number; sigma: number } | null = null;
  return fibreRuns(db, name).map((r) => {
    const s = summariseWindows(iterateWindows(db, r.run), overlapOf(r.station_config));
    const kappa = s.kappa_Nm_per_rad !== null && s.kappa_sigma_Nm_per_rad !== null ? { mean: s.kappa_Nm_per_rad, sigma: s.kappa_sigma_Nm_per_rad } : null;
    // κ moved when |κ_i − κ_{i−1}| > 2·sqrt(σ_i² + σ_{i−1}²): the difference exceeds
    // twice its combined standard uncertainty (about 95 % for Gaussian errors)
    const moved = kappa && prev ? Math.abs(kappa.mean - prev.mean) > 2 * Math.hypot(kappa.sigma, prev.sigma) : null;
    if (kappa) prev = kappa;
    return {
      run: r.run, station: r.station, started_at: iso(r.started_at_ms)!, ended_at: iso(r.ended_at_ms), status: r.status, samples: r.samples,
      windows: s.windows, windows_ok: s.windows_ok,
      period_s: s.period_s, period_sigma_s: s.period_sigma_s, q: s.q,
      kappa_Nm_per_rad: s.kappa_Nm_per_rad, kappa_sigma_Nm_per_rad: s.kappa_sigma_Nm_per_rad,
      shear_modulus_Pa: s.shear_modulus_Pa, shear_modulus_sigma_Pa: s.shear_modulus_sigma_Pa,
      equilibrium_rate_rad_per_s: s.equilibrium_rate_rad_per_s, equilibrium_rate_sigma_rad_per_s: s.equilibrium_rate_sigma_rad_per_s,
      temp_C: s.temp_C, kappa_moved: moved,
    };
  });
}
