/**
 * One fibre's history across its runs (`fibrewatch fibre NAME`): each run
 * summarised exactly as `show` does (src/analysis/run-summary.ts) — κ, G, Q,
 * creep rate, the period's amplitude slope, the warnings — and flags where κ
 * or Q moved beyond their uncertainties since the previous run that had one
 * (a damaged or overtwisted fibre, a changed pendulum, gas in the housing),
 * with the reason in words.
 */
import type { ReadStore } from '../../db/read-store.js';
import { summariseWindows, type RunSummaryNumbers } from '../analysis/run-summary.js';
import { lookupMaterial } from '../physics/materials.js';
import { fmt, withSigma } from '../display/format.js';
import { storedStation, summaryOptionsOf } from './summary-options.js';
import { storedRunSlope } from './amplitude-dependence.js';
import { runWarnings, type RunWarning } from './run-warnings.js';

/** A change since the previous run beyond the uncertainties, in words. */
export interface HistoryFlag {
  kind: 'kappa-moved' | 'q-moved';
  message: string;
}

/** One run of a fibre, summarised from its 'ok' windows as `show` does (SI units). */
export interface FibreHistoryRow extends Pick<RunSummaryNumbers,
  'windows' | 'windows_ok' | 'period_s' | 'period_sigma_s' | 'q' | 'q_sigma' | 'kappa_Nm_per_rad' | 'kappa_sigma_Nm_per_rad' | 'kappa_sigma_stat_Nm_per_rad'
  | 'kappa_sigma_budget' | 'shear_modulus_Pa' | 'shear_modulus_sigma_Pa' | 'shear_modulus_sigma_stat_Pa' | 'shear_modulus_sigma_budget'
  | 'equilibrium_rate_rad_per_s' | 'equilibrium_rate_sigma_rad_per_s' | 'temp_C'> {
  run: number;
  station: string;
  /** where the run came from: its station-made uid and its number at the station (as `show`) */
  uid: string;
  station_run: number;
  started_at: string;
  ended_at: string | null;
  status: string;
  samples: number;
  /** the period's dependence on the swing amplitude, as in `show` */
  period_amplitude_slope_s_per_rad: number | null;
  period_amplitude_slope_sigma_s_per_rad: number | null;
  /** κ moved beyond its uncertainty since the previous run with a κ; null when either has none */
  kappa_moved: boolean | null;
  /** Q moved beyond its uncertainty since the previous run with a Q; null when either has none */
  q_moved: boolean | null;
  /** what moved, by how much and what could have done it */
  flags: HistoryFlag[];
  /** as in `show` */
  warnings: RunWarning[];
}

const iso = (ms: number | null): string | null => (ms === null ? null : new Date(ms).toISOString());

/** A move beyond twice the combined standard uncertainty (about 95 % for Gaussian errors). */
const MOVED_SIGMAS = 2;

/** The history rows, oldest run first (none for an unknown fibre). */
export async function fibreHistory(store: ReadStore, name: string): Promise<FibreHistoryRow[]> {
  let prevK: { run: number; mean: number; total: number; stat: number; inertia: string; temp: number | null } | null = null;
  let prevQ: { run: number; q: number; sigma: number } | null = null;
  const rows: FibreHistoryRow[] = [];
  for (const r of await store.fibreRuns(name)) {
    const opts = summaryOptionsOf(r.station_config);
    const station = storedStation(r.station_config);
    const windows = await store.listWindows(r.run);
    const s = summariseWindows(windows, opts);
    const slope = await storedRunSlope(store, r, windows);
    const flags: HistoryFlag[] = [];
    // the inertia's error is the same in two runs that assumed the same inertia: it cancels in their difference
    const inertia = JSON.stringify([opts.context?.inertia_kg_m2 ?? null, opts.systematics?.inertia_sigma_kg_m2 ?? null]);
    const kappa = s.kappa_Nm_per_rad !== null && s.kappa_sigma_Nm_per_rad !== null && s.kappa_sigma_stat_Nm_per_rad !== null
      ? { run: r.run, mean: s.kappa_Nm_per_rad, total: s.kappa_sigma_Nm_per_rad, stat: s.kappa_sigma_stat_Nm_per_rad, inertia, temp: s.temp_C } : null;
    // κ moved when |κ_i − κ_{i−1}| > 2·sqrt(σ_i² + σ_{i−1}²); statistical σ's when the inertia is shared
    let kMoved: boolean | null = null;
    if (kappa && prevK) {
      const same = kappa.inertia === prevK.inertia;
      const sigma = same ? Math.hypot(kappa.stat, prevK.stat) : Math.hypot(kappa.total, prevK.total);
      const d = kappa.mean - prevK.mean;
      kMoved = Math.abs(d) > MOVED_SIGMAS * sigma;
      if (kMoved) flags.push({ kind: 'kappa-moved', message: kappaReason(prevK, kappa, sigma, same, station?.fibre.material) });
    }
    if (kappa) prevK = kappa;
    let qMoved: boolean | null = null;
    const q = s.q !== null && s.q_sigma !== null ? { run: r.run, q: s.q, sigma: s.q_sigma } : null;
    if (q && prevQ) {
      const sigma = Math.hypot(q.sigma, prevQ.sigma);
      qMoved = Math.abs(q.q - prevQ.q) > MOVED_SIGMAS * sigma;
      if (qMoved) {
        const rel = q.q / prevQ.q - 1;
        flags.push({
          kind: 'q-moved',
          message: `Q ${rel < 0 ? 'fell' : 'rose'} from ${withSigma(prevQ.q, prevQ.sigma)} (run ${prevQ.run}) to ${withSigma(q.q, q.sigma)}, ${fmt(rel * 100, 2)} % (${fmt(Math.abs(q.q - prevQ.q) / sigma, 2)} σ): ${rel < 0
            ? 'the fibre loses more — damaged, overtwisted or newly kinked; or gas in the housing (a leak, a pump off), or the pendulum rubbing'
            : 'the fibre loses less — it anneals and settles after loading, or the vacuum improved'}`,
        });
      }
    }
    if (q) prevQ = q;
    rows.push({
      run: r.run, station: r.station, uid: r.uid, station_run: r.station_run, started_at: iso(r.started_at_ms)!, ended_at: iso(r.ended_at_ms), status: r.status, samples: r.samples,
      windows: s.windows, windows_ok: s.windows_ok,
      period_s: s.period_s, period_sigma_s: s.period_sigma_s, q: s.q, q_sigma: s.q_sigma,
      kappa_Nm_per_rad: s.kappa_Nm_per_rad, kappa_sigma_Nm_per_rad: s.kappa_sigma_Nm_per_rad,
      kappa_sigma_stat_Nm_per_rad: s.kappa_sigma_stat_Nm_per_rad, kappa_sigma_budget: s.kappa_sigma_budget,
      shear_modulus_Pa: s.shear_modulus_Pa, shear_modulus_sigma_Pa: s.shear_modulus_sigma_Pa,
      shear_modulus_sigma_stat_Pa: s.shear_modulus_sigma_stat_Pa, shear_modulus_sigma_budget: s.shear_modulus_sigma_budget,
      equilibrium_rate_rad_per_s: s.equilibrium_rate_rad_per_s, equilibrium_rate_sigma_rad_per_s: s.equilibrium_rate_sigma_rad_per_s,
      temp_C: s.temp_C,
      period_amplitude_slope_s_per_rad: slope?.slope_s_per_rad ?? null,
      period_amplitude_slope_sigma_s_per_rad: slope?.slope_sigma_s_per_rad ?? null,
      kappa_moved: kMoved, q_moved: qMoved, flags,
      warnings: runWarnings(station, s, windows),
    });
  }
  return rows;
}

/** Why κ may have moved, with the temperature's share when both runs recorded one and the material's dG/dT is known. */
function kappaReason(
  prev: { run: number; mean: number; temp: number | null }, cur: { mean: number; temp: number | null }, sigma: number, sameInertia: boolean, material: string | undefined,
): string {
  const rel = cur.mean / prev.mean - 1;
  let temp = '';
  const m = material === undefined ? undefined : lookupMaterial(material);
  if (prev.temp !== null && cur.temp !== null) {
    const dT = cur.temp - prev.temp;
    // κ ∝ G: a temperature change moves κ by (1/G)·dG/dT·ΔT (docs/physics.md, "Temperature")
    const expected = m?.dGdT_per_K ? m.dGdT_per_K.value * dT : null;
    temp = expected === null
      ? `; the mean temperature moved by ${fmt(dT, 3)} K`
      : `; the mean temperature moved by ${fmt(dT, 3)} K, which accounts for ${fmt(expected * 100, 2)} % (${m!.name}'s dG/dT)`;
  }
  return `κ ${rel < 0 ? 'fell' : 'rose'} by ${fmt(Math.abs(rel) * 100, 3)} % since run ${prev.run} (${fmt(Math.abs(cur.mean - prev.mean) / sigma, 3)} σ of ${sameInertia ? 'their statistical uncertainties: the same inertia' : 'their total uncertainties'}): a damaged or overtwisted fibre, a changed load or pendulum, or a re-clamped fibre of another free length${temp}`;
}
