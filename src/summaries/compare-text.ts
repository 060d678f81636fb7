/** The comparison of a run's configurations for people (`compare` without --json, and the demo). */
import type { Comparison } from './compare-summary.js';
import { duration, fmt, table, withSigma } from '../display/format.js';
import { safeText } from '../display/safe-text.js';

/** The human-readable comparison; terminal-safe. */
export function renderComparison(c: Comparison): string {
  const urad = (x: number | null) => (x === null ? null : x * 1e6);
  const out: string[] = [];
  const ex = c.excluded;
  const span = c.from_s !== null || c.to_s !== null ? ` · from ${c.from_s === null ? 'the start' : duration(c.from_s)} to ${c.to_s === null ? 'the end' : duration(c.to_s)}` : '';
  out.push(`Run ${c.run} · configurations from ${c.source}${span} · ${c.segments.length} segment${c.segments.length === 1 ? '' : 's'}, ${c.windows_used} windows used`);
  out.push(`  left out: ${ex.straddling} straddling a change, ${ex.settling} settling (${duration(c.settle_s)} after a change), ${ex.rejected} rejected fits${ex.outside_span ? `, ${ex.outside_span} outside the span` : ''}`);
  if (c.drift_model) out.push(`  equilibrium drift: ${c.drift_model.description}; χ²_red ${fmt(c.chi2_red)}`);
  if (c.period_drift_model) out.push(`  period drift:      ${c.period_drift_model.description}; χ²_red ${fmt(c.period_chi2_red)}`);
  const sm = (what: string, s: Comparison['sigma']['equilibrium']) => s && out.push(`  σ (${what}): ${s.from === 'segments'
    ? `scatter of the segments against their neighbours (Birge ${fmt(s.birge_segments, 3)} on ${fmt(s.segment_dof, 2)} degrees of freedom, widened for them), ×${fmt(s.scale, 3)}`
    : `few segments: ×${fmt(s.scale, 3)}, the larger of the windows' Birge ratio ${fmt(s.birge_windows, 3)} and the segments' own scatter`}`);
  sm('equilibrium', c.sigma.equilibrium);
  sm('period', c.sigma.period);
  out.push('');
  out.push(...table(['segment', 'label', 'from', 'to', 'windows', 'equilibrium (µrad)', 'period (s)'],
    c.segments.map((s, i) => [String(i + 1), s.label + (s.mark && s.mark !== s.label ? ` (${s.mark})` : ''), duration(s.from_s), duration(s.to_s), String(s.windows),
      withSigma(urad(s.equilibrium_rad), urad(s.equilibrium_sigma_rad)), withSigma(s.period_s, s.period_sigma_s)])).trimEnd().split('\n'));
  if (c.differences.length) {
    out.push('');
    out.push(...table(['to − from', 'Δθ (µrad)', 'torque (N·m)', 'Δperiod (ppm)', 'segments'],
      c.differences.map((d) => [`${d.to} − ${d.from}`, withSigma(urad(d.delta_equilibrium_rad), urad(d.delta_equilibrium_sigma_rad)),
        withSigma(d.torque_Nm, d.torque_sigma_Nm), withSigma(d.delta_period_ppm, d.delta_period_sigma_ppm), String(d.segments_used)])).trimEnd().split('\n'));
  }
  for (const n of c.notes) out.push(`  note: ${n}`);
  return out.map(safeText).join('\n') + '\n';
}
