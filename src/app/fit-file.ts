/** The one-shot fit of a recorded file as a single window (`fibrewatch fit`). */
import type { Station } from '../config/station.js';
import type { WindowResult } from '../domain/window-result.js';
import { FLAG_INVALID, FLAG_SATURATED } from '../domain/block.js';
import { analyseWindow } from '../analysis/window-analysis.js';
import { WindowNoiseModel } from '../analysis/phase-diffusion.js';
import { readRecording } from './read-recording.js';
import { deriveContextFor, quantumFor, systematicsFor, twistLimitFor } from '../config/derive-context.js';
import { hampelSpikes } from '../analysis/hampel.js';
import { combinedRelative, kappaSystematics, shearModulusSystematics } from '../analysis/systematics.js';

/** The fitted numbers of docs/commands.md's `fit` output, as a window stores them. */
type FitNumbers = Pick<WindowResult,
  'period_s' | 'period_sigma_s' | 'decay_time_s' | 'decay_time_sigma_s' | 'q' | 'q_sigma' | 'amplitude_rad' | 'amplitude_sigma_rad'
  | 'equilibrium_rad' | 'equilibrium_sigma_rad' | 'drift_rad_per_s' | 'drift_sigma_rad_per_s' | 'phase_rad' | 'residual_rms_rad' | 'chi2_red'>;

/** One `fit` line: the fit, plus κ and G when the station gives inertia (and fibre). */
export interface FileFit extends FitNumbers, Partial<Pick<WindowResult, 'kappa_Nm_per_rad' | 'kappa_sigma_Nm_per_rad' | 'shear_modulus_Pa' | 'shear_modulus_sigma_Pa'>> {
  file: string;
  status: string;
  samples: number;
  samples_masked: number;
  bad_records: number;
  t_mid_s: number | null;
  /** largest excursion from equilibrium in the record, rad, and the fibre's elastic limit */
  max_twist_rad: number | null;
  twist_limit_rad?: number;
  /** a caution to show (twist near the elastic limit), if any */
  caution?: string;
}

/** Fit one file; a file that cannot be fitted comes back with its status, never with numbers. */
export async function fitFile(path: string, station: Station): Promise<FileFit> {
  const rec = await readRecording(path, station);
  const n = rec.t.length;
  const mask = new Uint8Array(n);
  const seedMask = new Uint8Array(n);
  let masked = 0;
  const usable = new Uint8Array(n);
  for (let i = 0; i < n; i++) usable[i] = rec.flags[i] & (FLAG_SATURATED | FLAG_INVALID) || !Number.isFinite(rec.angle[i]) ? 0 : 1;
  // spikes as `import` marks them (pipelines/clean.ts): one absurd value must not cost the whole file
  const a = station.analysis;
  const spikes = hampelSpikes(rec.angle, usable, { halfWidth: a.hampel_half_width, threshold: a.hampel_threshold, minScale: quantumFor(station) });
  for (let i = 0; i < n; i++) {
    if (!usable[i] || spikes[i]) { mask[i] = 1; masked++; }
    // a saturated value still helps find the period; an invalid one (bad time or value) or a spike does not
    if (rec.flags[i] & FLAG_INVALID || spikes[i] || !Number.isFinite(rec.angle[i])) seedMask[i] = 1;
  }
  const w = { index: 0, t: rec.t, y: rec.angle, mask, seedMask, temp: rec.temp, t_start_s: n ? rec.t[0] : 0, t_end_s: n ? rec.t[n - 1] : 0 };
  const ctx = deriveContextFor(station);
  // the same noise model a run starts with (phase-diffusion.ts): the fluctuation–dissipation value when the inertia is known
  const noise = new WindowNoiseModel({ damping: station.pendulum.damping, inertia_kg_m2: ctx.inertia_kg_m2, temperature_K: station.environment.temperature_K });
  const { result: r } = n >= 2 ? analyseWindow(w, { derive: ctx, extraVariance: (x) => noise.extra(x) }) : { result: null };
  const out: FileFit = {
    file: path,
    status: r ? r.status : 'too-few-samples',
    samples: r ? r.samples : n,
    samples_masked: masked,
    bad_records: rec.badRecords,
    t_mid_s: r ? r.t_mid_s : null,
    period_s: r?.period_s ?? null, period_sigma_s: r?.period_sigma_s ?? null,
    decay_time_s: r?.decay_time_s ?? null, decay_time_sigma_s: r?.decay_time_sigma_s ?? null,
    q: r?.q ?? null, q_sigma: r?.q_sigma ?? null,
    amplitude_rad: r?.amplitude_rad ?? null, amplitude_sigma_rad: r?.amplitude_sigma_rad ?? null,
    equilibrium_rad: r?.equilibrium_rad ?? null, equilibrium_sigma_rad: r?.equilibrium_sigma_rad ?? null,
    drift_rad_per_s: r?.drift_rad_per_s ?? null, drift_sigma_rad_per_s: r?.drift_sigma_rad_per_s ?? null,
    phase_rad: r?.phase_rad ?? null, residual_rms_rad: r?.residual_rms_rad ?? null, chi2_red: r?.chi2_red ?? null,
    max_twist_rad: null,
  };
  if (ctx.inertia_kg_m2 !== undefined) {
    // the window carries its statistical σ; the hand-measured inertia and dimensions enter once, here (systematics.ts)
    const sys = systematicsFor(station);
    const total = (v: number | null | undefined, stat: number | null | undefined, rel: number): number | null =>
      v === null || v === undefined || stat === null || stat === undefined ? null : Math.hypot(stat, Math.abs(v) * rel);
    out.kappa_Nm_per_rad = r?.kappa_Nm_per_rad ?? null;
    out.kappa_sigma_Nm_per_rad = total(r?.kappa_Nm_per_rad, r?.kappa_sigma_Nm_per_rad, combinedRelative(kappaSystematics(ctx, sys)));
    if (ctx.length_m !== undefined && (ctx.diameter_m !== undefined || ctx.width_m !== undefined)) {
      const terms = r?.kappa_Nm_per_rad != null ? shearModulusSystematics(r.kappa_Nm_per_rad, ctx, sys) : null;
      out.shear_modulus_Pa = r?.shear_modulus_Pa ?? null;
      out.shear_modulus_sigma_Pa = total(r?.shear_modulus_Pa, r?.shear_modulus_sigma_Pa, terms ? combinedRelative(terms) : 0);
    }
  }
  // the twist the fibre saw: largest excursion from the fitted (or median) equilibrium
  if (n) {
    const eq = out.equilibrium_rad ?? 0;
    let m = 0;
    for (let i = 0; i < n; i++) if (!mask[i]) m = Math.max(m, Math.abs(rec.angle[i] - eq));
    out.max_twist_rad = m;
    const lim = twistLimitFor(station);
    if (lim) {
      out.twist_limit_rad = lim.theta_max_rad;
      if (m >= station.alerts.twist_fraction * lim.theta_max_rad) {
        // the limit combines the twist's shear with the load's tension (von Mises, twist.ts)
        const reach = lim.theta_max_rad > 0 ? `reaches ${((100 * m) / lim.theta_max_rad).toFixed(0)} % of this fibre's elastic limit (${lim.turns.toFixed(1)} turns` : 'exceeds this fibre\'s elastic limit (none is left: the suspended load alone reaches the allowable stress';
        out.caution = `twist of ${(m / (2 * Math.PI)).toFixed(2)} turns ${reach}; shear from the twist and tension from the load combined; ${lim.basis}). `
          + 'Beyond it the fibre can set permanently or break, dropping the suspended mass: reduce the swing, use a catcher, stay within the rated load. '
          + 'This limit is guidance, not certification; local codes and licensed practice govern.';
      }
    }
  }
  return out;
}
