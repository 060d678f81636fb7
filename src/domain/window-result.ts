/**
 * Result of fitting one window (docs/commands.md "The fitted model"). All SI; each
 * `*_sigma_*` is the standard uncertainty of the quantity before it.
 * Fields are null when not computed (e.g. κ without an inertia).
 */
export interface WindowResult {
  /** window index within the run, from 0 */
  index: number;
  /** seconds since the run's start: first sample, middle, last sample of the window */
  t_start_s: number;
  t_mid_s: number;
  t_end_s: number;
  samples: number;
  /** 'ok' or the reason the fit was rejected (see FIT_STATUS in src/analysis) */
  status: string;
  period_s: number | null;
  period_sigma_s: number | null;
  /** τ (amplitude 1/e time); null when the fitted decay rate is ≤ 0 (no decay resolved: τ would be ∞ or negative) */
  decay_time_s: number | null;
  decay_time_sigma_s: number | null;
  /** γ = 1/τ, 1/s: finite for every ok window, slightly negative when no decay is resolved (kept so run averages are not biased) */
  decay_rate_per_s: number | null;
  decay_rate_sigma_per_s: number | null;
  q: number | null;
  q_sigma: number | null;
  amplitude_rad: number | null;
  amplitude_sigma_rad: number | null;
  equilibrium_rad: number | null;
  equilibrium_sigma_rad: number | null;
  drift_rad_per_s: number | null;
  drift_sigma_rad_per_s: number | null;
  phase_rad: number | null;
  /** √(Σw·r²/Σw) of the fit's residuals */
  residual_rms_rad: number | null;
  /** the residuals' variance over a noise level found independently of the model (1 for a good fit) */
  chi2_red: number | null;
  kappa_Nm_per_rad: number | null;
  kappa_sigma_Nm_per_rad: number | null;
  shear_modulus_Pa: number | null;
  shear_modulus_sigma_Pa: number | null;
  /** mean temperature over the window when the station records temp_C */
  temp_C: number | null;
}

/** Every field of a window result, in the order the store, `windows` and exports list them. */
export const WINDOW_FIELDS = [
  'index', 't_start_s', 't_mid_s', 't_end_s', 'samples', 'status',
  'period_s', 'period_sigma_s', 'decay_time_s', 'decay_time_sigma_s', 'decay_rate_per_s', 'decay_rate_sigma_per_s', 'q', 'q_sigma',
  'amplitude_rad', 'amplitude_sigma_rad', 'equilibrium_rad', 'equilibrium_sigma_rad',
  'drift_rad_per_s', 'drift_sigma_rad_per_s', 'phase_rad', 'residual_rms_rad', 'chi2_red',
  'kappa_Nm_per_rad', 'kappa_sigma_Nm_per_rad', 'shear_modulus_Pa', 'shear_modulus_sigma_Pa', 'temp_C',
] as const satisfies readonly (keyof WindowResult)[];

/** The fields a fit fills in: null in a rejected window (the temperature is kept). */
export const FITTED_FIELDS = WINDOW_FIELDS.slice(WINDOW_FIELDS.indexOf('period_s'), WINDOW_FIELDS.indexOf('temp_C')) as readonly FittedField[];
/** A field a fit fills in. */
export type FittedField = Exclude<(typeof WINDOW_FIELDS)[number], 'index' | 't_start_s' | 't_mid_s' | 't_end_s' | 'samples' | 'status' | 'temp_C'>;

/** The standard uncertainties among them. */
export const SIGMA_FIELDS = FITTED_FIELDS.filter((f) => f.includes('sigma'));

// the list names every field of the interface (a compile-time check)
type Unlisted = Exclude<keyof WindowResult, (typeof WINDOW_FIELDS)[number]>;
const everyFieldListed: [Unlisted] extends [never] ? true : Unlisted = true;
void everyFieldListed;
