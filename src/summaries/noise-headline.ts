/**
 * The headline of a run's noise for `show`: what the stored windows alone
 * tell (the Allan-deviation floors of equilibrium and fractional period) and
 * the thermal limits the fluctuation–dissipation theorem sets for the run's
 * κ, Q and temperature. The full torque-referred budget, which reads every
 * sample, is `fibrewatch noise RUN` (noise-budget.ts).
 */
import type { WindowResult } from '../domain/window-result.js';
import { windowStability } from '../analysis/window-stability.js';
import { thermalAngleRms, thermalTorquePsd, type Damping } from '../physics/thermal.js';

export interface NoiseHeadline {
  /** lowest overlapping Allan deviation of the window equilibria, rad, and its averaging time, s */
  equilibrium_adev_min_rad: number | null;
  equilibrium_adev_min_tau_s: number | null;
  /** lowest overlapping Allan deviation of the fractional period, and its averaging time, s */
  period_adev_min: number | null;
  period_adev_min_tau_s: number | null;
  /** equipartition rms angle √(k_B·T/κ), rad; null without κ */
  thermal_angle_rms_rad: number | null;
  /** the thermal torque ASD at the resonance for the stated damping, N·m/√Hz; null without κ, I or Q */
  thermal_torque_asd_at_resonance_Nm_per_rtHz: number | null;
}

/** Fewer Allan terms than this make a minimum that means little: those averaging times are skipped. */
const MIN_TERMS = 10;

function floorOf(tau: number[], adev: number[], n: number[]): { v: number | null; tau: number | null } {
  let best = -1;
  for (let i = 0; i < adev.length; i++) if (n[i] >= MIN_TERMS && Number.isFinite(adev[i]) && (best < 0 || adev[i] < adev[best])) best = i;
  return best < 0 ? { v: null, tau: null } : { v: adev[best], tau: tau[best] };
}

export function noiseHeadline(
  windows: readonly WindowResult[],
  p: { kappa_Nm_per_rad: number | null; q: number | null; inertia_kg_m2?: number; temperature_K: number; damping: Damping },
): NoiseHeadline {
  const st = windowStability(windows);
  const eq = floorOf(st.equilibrium.tau_s, st.equilibrium.adev_rad, st.equilibrium.n);
  const per = floorOf(st.period.tau_s, st.period.adev, st.period.n);
  const k = p.kappa_Nm_per_rad;
  const I = p.inertia_kg_m2;
  const f0 = k && I ? Math.sqrt(k / I) / (2 * Math.PI) : null;
  return {
    equilibrium_adev_min_rad: eq.v,
    equilibrium_adev_min_tau_s: eq.tau,
    period_adev_min: per.v,
    period_adev_min_tau_s: per.tau,
    thermal_angle_rms_rad: k && k > 0 ? thermalAngleRms(p.temperature_K, k) : null,
    thermal_torque_asd_at_resonance_Nm_per_rtHz:
      k && I && f0 && p.q && p.q > 0 ? Math.sqrt(thermalTorquePsd(f0, p.temperature_K, I, k, p.q, p.damping)) : null,
  };
}
