/**
 * Result of fitting one window (CONTRACT.md "The fitted model"). All SI; each
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
  decay_time_s: number | null;
  decay_time_sigma_s: number | null;
  q: number | null;
  q_sigma: number | null;
  amplitude_rad: number | null;
  amplitude_sigma_rad: number | null;
  equilibrium_rad: number | null;
  equilibrium_sigma_rad: number | null;
  drift_rad_per_s: number | null;
  drift_sigma_rad_per_s: number | null;
  phase_rad: number | null;
  residual_rms_rad: number | null;
  chi2_red: number | null;
  kappa_Nm_per_rad: number | null;
  kappa_sigma_Nm_per_rad: number | null;
  shear_modulus_Pa: number | null;
  shear_modulus_sigma_Pa: number | null;
  /** mean temperature over the window when the station records temp_C */
  temp_C: number | null;
}
