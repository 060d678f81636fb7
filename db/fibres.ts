/**
 * Fibre queries: the fibres the store knows and one fibre's history run by run.
 */
import type { Database } from 'better-sqlite3';

/** A fibre with its run count and first/last run start (ISO 8601 UTC). */
export interface FibreListing {
  name: string;
  material: string | null;
  diameter_m: number | null;
  length_m: number | null;
  width_m: number | null;
  thickness_m: number | null;
  runs: number;
  first_run: string | null;
  last_run: string | null;
}

/** One run of a fibre, summarised from its 'ok' windows (SI units). */
export interface FibreHistoryRow {
  run: number;
  station: string;
  started_at: string;
  ended_at: string | null;
  status: string;
  samples: number;
  windows: number;
  windows_ok: number;
  period_s: number | null;
  period_sigma_s: number | null;
  q: number | null;
  kappa_Nm_per_rad: number | null;
  kappa_sigma_Nm_per_rad: number | null;
  shear_modulus_Pa: number | null;
  shear_modulus_sigma_Pa: number | null;
  /** equilibrium creep: least-squares slope of equilibrium_rad against t_mid_s */
  equilibrium_rate_rad_per_s: number | null;
  equilibrium_rate_sigma_rad_per_s: number | null;
  temp_C: number | null;
  /** κ moved beyond its uncertainty since the previous run with a κ; null when either has none */
  kappa_moved: boolean | null;
}

const iso = (ms: number | null): string | null => (ms === null ? null : new Date(ms).toISOString());

/** All fibres, by name. */
export function listFibres(db: Database): FibreListing[] {
  const rows = db.prepare(`
    SELECT f.name, f.material, f.diameter_m, f.length_m, f.width_m, f.thickness_m,
           COUNT(r.id) AS runs, MIN(r.started_at_ms) AS first_ms, MAX(r.started_at_ms) AS last_ms
    FROM fibres f LEFT JOIN runs r ON r.fibre_id = f.id
    GROUP BY f.id ORDER BY f.name`).all() as (Omit<FibreListing, 'first_run' | 'last_run'> & { first_ms: number | null; last_ms: number | null })[];
  return rows.map(({ first_ms, last_ms, ...f }) => ({ ...f, first_run: iso(first_ms), last_run: iso(last_ms) }));
}

/** Inverse-variance weighted mean of (x, σ) pairs with σ > 0; σ of the mean from Σw, scaled by max(1, Birge ratio). */
function weightedMean(x: number[], s: number[]): { mean: number; sigma: number } | null {
  let sw = 0;
  let swx = 0;
  for (let i = 0; i < x.length; i++) {
    const w = 1 / (s[i] * s[i]);
    sw += w;
    swx += w * x[i];
  }
  if (!(sw > 0)) return null;
  const mean = swx / sw;
  let chi2 = 0;
  for (let i = 0; i < x.length; i++) chi2 += ((x[i] - mean) / s[i]) ** 2;
  // Birge ratio: when the scatter exceeds the stated sigmas, trust the scatter (common practice, no source)
  const birge = x.length > 1 ? Math.sqrt(chi2 / (x.length - 1)) : 1;
  return { mean, sigma: Math.max(1, birge) / Math.sqrt(sw) };
}

interface WinRow {
  run_id: number; status: string; t_start_s: number; t_mid_s: number; t_end_s: number;
  period_s: number | null; period_sigma_s: number | null; q: number | null;
  kappa_Nm_per_rad: number | null; kappa_sigma_Nm_per_rad: number | null;
  shear_modulus_Pa: number | null; shear_modulus_sigma_Pa: number | null;
  equilibrium_rad: number | null; temp_C: number | null;
}

class RunAcc {
  windows = 0;
  ok = 0;
  len = 0;
  tmid: number[] = [];
  eq: number[] = [];
  per: [number[], number[]] = [[], []];
  kap: [number[], number[]] = [[], []];
  g: [number[], number[]] = [[], []];
  q: number[] = [];
  temp: number[] = [];
}

const pair = (p: [number[], number[]], x: number | null, s: number | null): void => {
  if (x !== null && s !== null && Number.isFinite(x) && s > 0) {
    p[0].push(x);
    p[1].push(s);
  }
};
const mean = (a: number[]): number | null => (a.length ? a.reduce((u, v) => u + v, 0) / a.length : null);

/**
 * One fibre's history, a row per run (oldest first). Windows overlap (a window of
 * several periods steps by one), so neighbouring fits share data: every σ of a
 * run mean is scaled by sqrt(window length / window step), the usual correction
 * for the effective number of independent windows (an approximation; common
 * practice, no source).
 */
export function fibreHistory(db: Database, name: string): FibreHistoryRow[] {
  const runs = db.prepare(`
    SELECT r.id, s.name AS station, r.started_at_ms, r.ended_at_ms, r.status, r.samples
    FROM runs r JOIN fibres f ON f.id = r.fibre_id JOIN stations s ON s.id = r.station_id
    WHERE f.name = ? ORDER BY r.started_at_ms, r.id`).all(name) as {
      id: number; station: string; started_at_ms: number; ended_at_ms: number | null; status: string; samples: number;
    }[];
  const acc = new Map<number, RunAcc>(runs.map((r) => [r.id, new RunAcc()]));
  const wins = db.prepare(`
    SELECT w.run_id, w.status, w.t_start_s, w.t_mid_s, w.t_end_s, w.period_s, w.period_sigma_s, w.q,
           w.kappa_Nm_per_rad, w.kappa_sigma_Nm_per_rad, w.shear_modulus_Pa, w.shear_modulus_sigma_Pa,
           w.equilibrium_rad, w.temp_C
    FROM windows w JOIN runs r ON r.id = w.run_id JOIN fibres f ON f.id = r.fibre_id
    WHERE f.name = ? ORDER BY w.run_id, w.idx`);
  for (const w of wins.iterate(name) as IterableIterator<WinRow>) {
    const a = acc.get(w.run_id)!;
    a.windows++;
    if (w.status !== 'ok') continue;
    a.ok++;
    a.len += w.t_end_s - w.t_start_s;
    a.tmid.push(w.t_mid_s);
    if (w.equilibrium_rad !== null) a.eq.push(w.equilibrium_rad);
    else a.eq.push(NaN);
    pair(a.per, w.period_s, w.period_sigma_s);
    pair(a.kap, w.kappa_Nm_per_rad, w.kappa_sigma_Nm_per_rad);
    pair(a.g, w.shear_modulus_Pa, w.shear_modulus_sigma_Pa);
    if (w.q !== null) a.q.push(w.q);
    if (w.temp_C !== null) a.temp.push(w.temp_C);
  }

  const out: FibreHistoryRow[] = [];
  let prevKappa: { mean: number; sigma: number } | null = null;
  for (const r of runs) {
    const a = acc.get(r.id)!;
    // overlap factor: mean window length over mean spacing of window middles
    let overlap = 1;
    if (a.ok > 1) {
      const step = (a.tmid[a.tmid.length - 1] - a.tmid[0]) / (a.ok - 1);
      if (step > 0) overlap = Math.max(1, a.len / a.ok / step);
    }
    const scale = Math.sqrt(overlap);
    const wm = (p: [number[], number[]]) => {
      const m = weightedMean(p[0], p[1]);
      return m ? { mean: m.mean, sigma: m.sigma * scale } : null;
    };
    const per = wm(a.per);
    const kap = wm(a.kap);
    const g = wm(a.g);
    const rate = creepRate(a.tmid, a.eq, scale);
    // κ moved when |κ_i − κ_{i−1}| > 2·sqrt(σ_i² + σ_{i−1}²): the difference exceeds
    // twice its combined standard uncertainty (about 95 % for Gaussian errors)
    let moved: boolean | null = null;
    if (kap && prevKappa) moved = Math.abs(kap.mean - prevKappa.mean) > 2 * Math.hypot(kap.sigma, prevKappa.sigma);
    if (kap) prevKappa = kap;
    out.push({
      run: r.id,
      station: r.station,
      started_at: iso(r.started_at_ms)!,
      ended_at: iso(r.ended_at_ms),
      status: r.status,
      samples: r.samples,
      windows: a.windows,
      windows_ok: a.ok,
      period_s: per?.mean ?? null,
      period_sigma_s: per?.sigma ?? null,
      q: mean(a.q),
      kappa_Nm_per_rad: kap?.mean ?? null,
      kappa_sigma_Nm_per_rad: kap?.sigma ?? null,
      shear_modulus_Pa: g?.mean ?? null,
      shear_modulus_sigma_Pa: g?.sigma ?? null,
      equilibrium_rate_rad_per_s: rate?.slope ?? null,
      equilibrium_rate_sigma_rad_per_s: rate?.sigma ?? null,
      temp_C: mean(a.temp),
      kappa_moved: moved,
    });
  }
  return out;
}

/** Ordinary least-squares slope of y(t) and its σ from the residuals (needs ≥ 3 points). */
function creepRate(t: number[], y: number[], scale: number): { slope: number; sigma: number } | null {
  const ts: number[] = [];
  const ys: number[] = [];
  for (let i = 0; i < t.length; i++) if (Number.isFinite(y[i])) { ts.push(t[i]); ys.push(y[i]); }
  const n = ts.length;
  if (n < 3) return null;
  const mt = ts.reduce((u, v) => u + v, 0) / n;
  const my = ys.reduce((u, v) => u + v, 0) / n;
  let stt = 0;
  let sty = 0;
  for (let i = 0; i < n; i++) {
    stt += (ts[i] - mt) ** 2;
    sty += (ts[i] - mt) * (ys[i] - my);
  }
  if (!(stt > 0)) return null;
  const slope = sty / stt;
  let ssr = 0;
  for (let i = 0; i < n; i++) ssr += (ys[i] - my - slope * (ts[i] - mt)) ** 2;
  return { slope, sigma: (Math.sqrt(ssr / (n - 2) / stt)) * scale };
}
