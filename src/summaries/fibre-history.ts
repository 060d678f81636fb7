/**
 * One fibre's history across its runs (`fibrewatch fibre NAME`): each run
 * summarised exactly as `show` does (src/analysis/run-summary.ts), and whether
 * κ moved beyond its uncertainty since the previous run that had one.
 */
import type { ReadStore } from '../../db/read-store.js';
import { summariseWindows, type RunSummaryNumbers } from '../analysis/run-summary.js';
import { summaryOptionsOf } from './show-summary.js';

/** One run of a fibre, summarised from its 'ok' windows as `show` does (SI units). */
export interface FibreHistoryRow extends Pick<RunSummaryNumbers,
  'windows' | 'windows_ok' | 'period_s' | 'period_sigma_s' | 'q' | 'kappa_Nm_per_rad' | 'kappa_sigma_Nm_per_rad' | 'kappa_sigma_stat_Nm_per_rad'
  | 'kappa_sigma_budget' | 'shear_modulus_Pa' | 'shear_modulus_sigma_Pa' | 'shear_modulus_sigma_stat_Pa' | 'shear_modulus_sigma_budget'
  | 'equilibrium_rate_rad_per_s' | 'equilibrium_rate_sigma_rad_per_s' | 'temp_C'> {
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
export async function fibreHistory(store: ReadStore, name: string): Promise<FibreHistoryRow[]> {
  let prev: { mean: number; total: number; stat: number; inertia: string } | null = null;
  const rows: FibreHistoryRow[] = [];
  for (const r of await store.fibreRuns(name)) {
    const opts = summaryOptionsOf(r.station_config);
    const s = summariseWindows(await store.listWindows(r.run), opts);
    // the inertia's error is the same in two runs that assumed the same inertia: it cancels in their difference
    const inertia = JSON.stringify([opts.context?.inertia_kg_m2 ?? null, opts.systematics?.inertia_sigma_kg_m2 ?? null]);
    const kappa = s.kappa_Nm_per_rad !== null && s.kappa_sigma_Nm_per_rad !== null && s.kappa_sigma_stat_Nm_per_rad !== null
      ? { mean: s.kappa_Nm_per_rad, total: s.kappa_sigma_Nm_per_rad, stat: s.kappa_sigma_stat_Nm_per_rad, inertia } : null;
    // κ moved when |κ_i − κ_{i−1}| > 2·sqrt(σ_i² + σ_{i−1}²): the difference exceeds twice its combined
    // standard uncertainty (about 95 % for Gaussian errors); statistical σ's when the inertia is shared
    let moved: boolean | null = null;
    if (kappa && prev) {
      const same = kappa.inertia === prev.inertia;
      moved = Math.abs(kappa.mean - prev.mean) > 2 * (same ? Math.hypot(kappa.stat, prev.stat) : Math.hypot(kappa.total, prev.total));
    }
    if (kappa) prev = kappa;
    rows.push({
      run: r.run, station: r.station, started_at: iso(r.started_at_ms)!, ended_at: iso(r.ended_at_ms), status: r.status, samples: r.samples,
      windows: s.windows, windows_ok: s.windows_ok,
      period_s: s.period_s, period_sigma_s: s.period_sigma_s, q: s.q,
      kappa_Nm_per_rad: s.kappa_Nm_per_rad, kappa_sigma_Nm_per_rad: s.kappa_sigma_Nm_per_rad,
      kappa_sigma_stat_Nm_per_rad: s.kappa_sigma_stat_Nm_per_rad, kappa_sigma_budget: s.kappa_sigma_budget,
      shear_modulus_Pa: s.shear_modulus_Pa, shear_modulus_sigma_Pa: s.shear_modulus_sigma_Pa,
      shear_modulus_sigma_stat_Pa: s.shear_modulus_sigma_stat_Pa, shear_modulus_sigma_budget: s.shear_modulus_sigma_budget,
      equilibrium_rate_rad_per_s: s.equilibrium_rate_rad_per_s, equilibrium_rate_sigma_rad_per_s: s.equilibrium_rate_sigma_rad_per_s,
      temp_C: s.temp_C, kappa_moved: moved,
    });
  }
  return rows;
}
