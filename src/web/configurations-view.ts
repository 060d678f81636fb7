/// <reference lib="dom" />
/**
 * The "Configurations" section of a run (dashboard run page and report): the
 * comparison `compare RUN --json` gives — each configuration's equilibrium and
 * period with σ, each pair's Δθ, torque κ·Δθ and period change, the drift
 * models fitted beside them, and the notes — as tables. Display units µrad and
 * ppm; every label and note from the store goes in as text.
 */
import type { Comparison } from '../summaries/compare-summary.js';
import { duration, fmt, withSigma } from '../display/format.js';
import { clear, el, facts, put, table } from './dom.js';

const urad = (x: number | null) => (x === null ? null : x * 1e6);

/** Fill `box` with the comparison (null: `missing` as a note, when given). */
export function renderConfigurations(box: HTMLElement, c: Comparison | null, missing?: string): void {
  clear(box);
  if (!c) {
    if (missing) box.appendChild(el('p', 'note', missing));
    return;
  }
  if (c.configurations.length < 2) {
    // one configuration (or none marked): a line saying so, not empty tables
    box.appendChild(el('p', 'note', c.notes[0] ?? 'one configuration: nothing to compare'));
    return;
  }
  const ex = c.excluded;
  const span = c.from_s !== null || c.to_s !== null ? ` · from ${c.from_s === null ? 'the start' : duration(c.from_s)} to ${c.to_s === null ? 'the end' : duration(c.to_s)}` : '';
  box.appendChild(el('p', 'note', `configurations from the ${c.source === 'state and marks' ? 'state channel and marks' : c.source === 'state' ? 'state channel' : 'marks'}${span} · ${c.segments.length} segments, ${c.windows_used} windows used · left out: ${ex.straddling} straddling a change, ${ex.settling} settling (${duration(c.settle_s)} after a change), ${ex.rejected} rejected fits${ex.outside_span ? `, ${ex.outside_span} outside the span` : ''}`));
  box.appendChild(table(['configuration', 'segments', 'windows', 'equilibrium (µrad)', 'period (s)'],
    c.configurations.map((k) => [k.label, String(k.segments), String(k.windows), withSigma(urad(k.equilibrium_rad), urad(k.equilibrium_sigma_rad)), withSigma(k.period_s, k.period_sigma_s)]),
    'data configurations'));
  if (c.differences.length) {
    box.appendChild(table(['to − from', 'Δθ (µrad)', 'torque (N·m)', 'Δperiod (ppm)', 'segments'],
      c.differences.map((d) => [`${d.to} − ${d.from}`, withSigma(urad(d.delta_equilibrium_rad), urad(d.delta_equilibrium_sigma_rad)),
        withSigma(d.torque_Nm, d.torque_sigma_Nm), withSigma(d.delta_period_ppm, d.delta_period_sigma_ppm), String(d.segments_used)]),
      'data differences'));
  } else box.appendChild(el('p', 'note', 'no pair of configurations both with windows in the comparison'));
  const rows: [string, string][] = [];
  if (c.drift_model) rows.push(['equilibrium drift', `${c.drift_model.description}; χ²_red ${fmt(c.chi2_red)}`]);
  if (c.period_drift_model) rows.push(['period drift', `${c.period_drift_model.description}; χ²_red ${fmt(c.period_chi2_red)}`]);
  rows.push(['κ for the torques', c.kappa_Nm_per_rad === null ? 'none (the station gives no inertia): no torques' : withSigma(c.kappa_Nm_per_rad, c.kappa_sigma_Nm_per_rad, 'N·m/rad')]);
  for (const [name, t] of Object.entries(c.period_terms)) rows.push([`period term: ${name}`, withSigma(t.value, t.sigma, name === 'temperature' ? 's/K' : name === 'amplitude' ? 's/rad' : '')]);
  box.appendChild(facts(rows, 'facts drift'));
  if (c.notes.length) {
    const ul = put(box, el('ul', 'notes')).lastChild as HTMLElement;
    for (const n of c.notes) ul.appendChild(el('li', 'note', n));
  }
}
