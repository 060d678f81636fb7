/** `fibrewatch show RUN [--json]`: one run's summary. */
import { withReadStore } from '../store.js';
import { buildSummary, type ShowSummary } from '../../summaries/show-summary.js';
import { duration, fmt, isoShort, withSigma } from '../../display/format.js';
import { budgetText, correctionsText } from '../../summaries/budget-text.js';
import { safeText } from '../../display/safe-text.js';

export async function showCommand(run: number, opts: { db?: string; json?: boolean }): Promise<void> {
  const s = await withReadStore(opts.db, (store) => buildSummary(store, run));
  process.stdout.write(opts.json ? JSON.stringify(s, null, 2) + '\n' : renderSummary(s));
}

/** The human-readable summary (also printed by `demo` and `import`); names and messages are made terminal-safe line by line. */
export function renderSummary(s: ShowSummary): string {
  const perH = (x: number | null | undefined) => (x === null || x === undefined ? null : x * 3600);
  const row = (label: string, value: string) => `  ${label.padEnd(18)}${value}`;
  const lines = [
    `Run ${s.run} · station ${s.station} · fibre ${s.fibre} · ${s.status}`,
    row('span (UTC)', `${isoShort(s.started_at)} → ${isoShort(s.ended_at, '(still recording)')}${s.duration_s !== null ? `  (${duration(s.duration_s)})` : ''}`),
    row('samples', `${s.samples}   windows ${s.windows} (${s.windows_ok} ok)   gaps ${s.gaps}   events ${s.events}`),
    row('period', withSigma(s.period_s, s.period_sigma_s, 's')),
    row('Q', `${withSigma(s.q, s.q_sigma)}${s.q === null ? '' : ' (from the amplitude decay over the run)'}`),
    row('equilibrium rate', `${withSigma(perH(s.equilibrium_rate_rad_per_s), perH(s.equilibrium_rate_sigma_rad_per_s), 'rad/h')}${s.equilibrium_rate_rad_per_s === null ? '' : ' (over the run)'}`),
  ];
  const budget = (b: string): string => (b ? `   ${b}` : '');
  if (s.kappa_Nm_per_rad !== undefined) lines.push(row('κ', withSigma(s.kappa_Nm_per_rad, s.kappa_sigma_Nm_per_rad, 'N·m/rad') + budget(budgetText(s.kappa_sigma_budget))));
  if (s.shear_modulus_Pa !== undefined) {
    const g = s.shear_modulus_Pa === null ? null : s.shear_modulus_Pa / 1e9;
    const gs = s.shear_modulus_sigma_Pa == null ? null : s.shear_modulus_sigma_Pa / 1e9;
    lines.push(row('G', withSigma(g, gs, 'GPa') + budget(budgetText(s.shear_modulus_sigma_budget))));
  }
  lines.push(row('corrections', correctionsText(s)));
  if (s.amplitude_rad !== null) lines.push(row('amplitude', `${fmt(s.amplitude_rad)} rad (last window)`));
  if (s.period_amplitude_slope_s_per_rad !== null) {
    lines.push(row('period vs swing', `${withSigma(s.period_amplitude_slope_s_per_rad, s.period_amplitude_slope_sigma_s_per_rad, 's/rad')} (anelasticity: 0 for an elastic fibre${s.period_amplitude_slope_temperature_removed ? '; temperature removed' : ''})`));
  }
  lines.push(...noiseRows(s, row));
  if (s.archive_synced_at !== null) {
    const lag = s.archive_lag_s ?? 0;
    lines.push(row('lab archive', `synced ${isoShort(s.archive_synced_at)}${lag > 0 ? `, ${lag < 60 ? `${lag.toFixed(1)} s` : duration(lag)} behind` : ', up to date'}`));
  }
  for (const a of s.alerts) lines.push(row('alert', `${a.kind}: ${a.state} at ${isoShort(a.t)} — ${a.message}`));
  for (const w of s.warnings) lines.push(row('warning', `${w.kind}: ${w.message}`));
  return lines.map(safeText).join('\n') + '\n';
}

/** The noise headline: stability floors from the windows, thermal limits from κ, Q and T. */
function noiseRows(s: ShowSummary, row: (label: string, value: string) => string): string[] {
  const n = s.noise;
  const out: string[] = [];
  const at = (tau: number | null) => (tau === null ? '' : ` at τ = ${duration(tau)}`);
  const parts: string[] = [];
  if (n.equilibrium_adev_min_rad !== null) parts.push(`equilibrium ${fmt(n.equilibrium_adev_min_rad)} rad${at(n.equilibrium_adev_min_tau_s)}`);
  if (n.period_adev_min !== null) parts.push(`period ${fmt(n.period_adev_min * 1e6)} ppm${at(n.period_adev_min_tau_s)}`);
  if (parts.length) out.push(row('stability floor', `${parts.join('; ')} (lowest Allan deviation)`));
  const th: string[] = [];
  if (n.thermal_angle_rms_rad !== null) th.push(`angle rms ${fmt(n.thermal_angle_rms_rad)} rad`);
  if (n.thermal_torque_asd_at_resonance_Nm_per_rtHz !== null) th.push(`torque ${fmt(n.thermal_torque_asd_at_resonance_Nm_per_rtHz)} N·m/√Hz at resonance`);
  if (th.length) out.push(row('thermal limit', `${th.join(', ')}${s.temperature_source === 'assumed' ? ' (295 K assumed)' : ''}; full budget: fibrewatch noise ${s.run}`));
  return out;
}
