/**
 * Test helper: Monte-Carlo runs of a deflection experiment on the virtual
 * balance — source masses switched between two positions every two hours on a
 * fibre whose equilibrium creeps quadratically — each analysed through the
 * real pipeline, cut into segments and compared as `fibrewatch compare` does.
 * Also an anelastic fibre's slope. The scenarios are invented for the tests.
 */
import type { WindowResult } from '../../src/domain/window-result.js';
import { segmentRun } from '../../src/analysis/configuration-segments.js';
import { fitConfigurations } from '../../src/analysis/configuration-fit.js';
import { fitAmplitudeSlope, periodAmplitude } from '../../src/analysis/amplitude-slope.js';
import { runPipeline, sd } from './pipeline-run.js';

/** The deflection scenario's truth and layout. */
export const DEFLECTION = {
  inertia_kg_m2: 1e-5,
  period_s: 60,
  /** B − A: equilibrium, rad, and period, ppm */
  delta_rad: 2e-6,
  delta_ppm: 20,
  every_s: 7200,
  hours: 36,
  sample_rate_Hz: 1,
  window_periods: 4,
  step_periods: 2,
};

/** One seed's comparison: Δθ and Δperiod against the truth, in σ's. */
export interface DeflectionPull {
  seed: number;
  delta_rad: number;
  delta_sigma_rad: number;
  delta_ppm: number;
  delta_sigma_ppm: number;
  pull_equilibrium: number;
  pull_period: number;
  model: string;
  period_model: string;
}

/** Run the deflection scenario for one seed (internal damping: thermal 1/f torque, the usual case of a fibre). */
export async function deflectionRun(seed: number, damping: 'internal' | 'viscous' = 'internal'): Promise<DeflectionPull> {
  const D = DEFLECTION;
  const kappa = D.inertia_kg_m2 * ((2 * Math.PI) / D.period_s) ** 2;
  const duration_s = D.hours * 3600;
  const { windows } = await runPipeline({
    name: 'deflection-ab', duration_s, sample_rate_Hz: D.sample_rate_Hz, inertia_kg_m2: D.inertia_kg_m2, kappa_Nm_per_rad: kappa,
    q: 2000, damping, angle_noise_rad: 1e-7, initial: { amplitude_rad: 2e-3 },
    // quadratic creep: 0.13 µrad/h at first, bending to 34 µrad over the 36 h
    drift: { rate_rad_per_s: 1e-10, quadratic_rad_per_s2: 2e-15 },
    configurations: { states: [{ state: 1 }, { state: 2, torque_Nm: D.delta_rad * kappa, period_ppm: D.delta_ppm }], every_s: D.every_s },
  }, { seed, damping, analysis: { window_periods: D.window_periods, step_periods: D.step_periods } });
  // the changes as the stored state channel shows them: last sample of the old state, first of the new
  const changes = [];
  for (let k = 1; k * D.every_s < duration_s; k++) changes.push({ t_prev_s: k * D.every_s - 1 / D.sample_rate_Hz, t_new_s: k * D.every_s, state: (k % 2) + 1 });
  return compareWindows(seed, windows, changes, duration_s);
}

function compareWindows(seed: number, windows: WindowResult[], changes: { t_prev_s: number; t_new_s: number; state: number }[], end_s: number): DeflectionPull {
  const D = DEFLECTION;
  const sg = segmentRun(1, changes, windows.map((w) => ({ t_start_s: w.t_start_s, t_end_s: w.t_end_s, ok: w.status === 'ok' })), {
    settle_s: 3 * D.period_s, end_s, margin_s: D.period_s / 4,
  });
  const used = windows.map((w, i) => ({ w, s: sg.segmentOf[i] })).filter((x) => x.s >= 0);
  const common = { t_s: used.map((x) => x.w.t_mid_s), config: used.map((x) => sg.segments[x.s].config), segment: used.map((x) => x.s) };
  const overlap = D.window_periods / D.step_periods;
  const eq = fitConfigurations({ ...common, y: used.map((x) => x.w.equilibrium_rad!), sigma: used.map((x) => x.w.equilibrium_sigma_rad!) }, { overlap, logCreep: true });
  const per = fitConfigurations({
    ...common, y: used.map((x) => x.w.period_s!), sigma: used.map((x) => x.w.period_sigma_s!),
    extras: [{ name: 'amplitude', values: used.map((x) => x.w.amplitude_rad!) }],
  }, { overlap });
  if (!eq || !per) throw new Error(`seed ${seed}: the comparison could not be fitted`);
  const dif = (f: NonNullable<typeof eq>) => ({ d: f.levels[1] - f.levels[0], s: Math.sqrt(f.levelCov[3] + f.levelCov[0] - 2 * f.levelCov[1]) });
  const e = dif(eq), p = dif(per);
  const ppm = (x: number) => (x / per.levels[0]) * 1e6;
  return {
    seed, delta_rad: e.d, delta_sigma_rad: e.s, delta_ppm: ppm(p.d), delta_sigma_ppm: ppm(p.s),
    pull_equilibrium: (e.d - D.delta_rad) / e.s, pull_period: (ppm(p.d) - D.delta_ppm) / ppm(p.s),
    model: eq.model.description, period_model: per.model.description,
  };
}

/** The slope an anelastic fibre shows on a quiet decay, against the truth (s/rad). */
export const ANELASTIC = { slope_s_per_rad: 6, period_s: 30, inertia_kg_m2: 1e-5, q: 600, hours: 6 };

/** The anelastic scenario (a quiet free decay) for `seed`, and the slope fitted to its windows. */
export async function anelasticRun(seed: number, extra: Record<string, unknown> = {}): Promise<{ windows: WindowResult[]; slope: number; sigma: number; pull: number }> {
  const A = ANELASTIC;
  const { windows } = await runPipeline({
    name: 'anelastic-decay', duration_s: A.hours * 3600, sample_rate_Hz: 2, inertia_kg_m2: A.inertia_kg_m2,
    kappa_Nm_per_rad: A.inertia_kg_m2 * ((2 * Math.PI) / A.period_s) ** 2, q: A.q, damping: 'internal',
    angle_noise_rad: 1e-7, initial: { amplitude_rad: 5e-3 }, anelastic: { period_amplitude_slope_s_per_rad: A.slope_s_per_rad }, ...extra,
  }, { seed, damping: 'internal' });
  const ok = windows.filter((w) => w.status === 'ok');
  const f = fitAmplitudeSlope(ok.map(periodAmplitude), ok.map((w) => w.period_s!), ok.map((w) => w.period_sigma_s!), {
    temp_C: ok.map((w) => w.temp_C), overlap: 4,
  });
  if (!f) throw new Error(`seed ${seed}: no slope`);
  return { windows, slope: f.slope_s_per_rad, sigma: f.slope_sigma_s_per_rad, pull: (f.slope_s_per_rad - A.slope_s_per_rad) / f.slope_sigma_s_per_rad };
}

/** Mean and sample SD of pulls. */
export function pullStats(x: number[]): { mean: number; sd: number; max_abs: number } {
  return { mean: x.reduce((a, b) => a + b, 0) / x.length, sd: sd(x), max_abs: Math.max(...x.map(Math.abs)) };
}
