/** Plain words for a run's uncertainty budget and the corrections applied, shared by `show`, `fibre` and the report. */
import type { SigmaBudget } from '../analysis/run-summary.js';
import type { Damping } from '../physics/thermal.js';
import { fmt } from '../display/format.js';

const percent = (r: number): string => `${fmt(r * 100, 2)} %`;

/** The source that dominates a budget (the largest relative term), or null for an empty budget. */
export function dominantSource(budget: SigmaBudget | null | undefined): string | null {
  if (!budget) return null;
  let best: string | null = null, v = -1;
  for (const [k, x] of Object.entries(budget)) if (x !== undefined && x > v) { best = k; v = x; }
  return best;
}

/** "σ: inertia 0.56 % dominates (statistical 0.0021 %, length 0.13 %)" — relative standard uncertainties by source. */
export function budgetText(budget: SigmaBudget | null | undefined): string {
  const top = dominantSource(budget);
  if (!budget || top === null) return '';
  // a zero term is a σ the station does not give: not worth a word
  const rest = Object.entries(budget).filter(([k, x]) => k !== top && x !== undefined && x > 0).map(([k, x]) => `${k} ${percent(x!)}`);
  return `σ: ${top} ${percent(budget[top as keyof SigmaBudget]!)} dominates${rest.length ? ` (${rest.join(', ')})` : ''}`;
}

/** What was corrected for in κ, G and Q: the damping model of T₀ and the tension term. */
export function correctionsText(s: {
  damping: Damping; tension_N: number | null; tension_share_ppm: number | null;
  temperature_K: number | null; temperature_source: 'recorded' | 'station' | 'assumed' | null;
}): string {
  const damping = s.damping === 'internal'
    ? 'T₀ for internal damping (constant loss angle: ω₀² = ω_d² − γ²)'
    : 'T₀ for viscous damping (ω₀² = ω_d² + γ²)';
  const tension = s.tension_N === null
    ? 'no tension term (pendulum.mass_kg not given)'
    : s.tension_share_ppm === null
      ? `tension ${fmt(s.tension_N)} N (no κ to compare it with)`
      : `tension ${fmt(s.tension_N)} N: ${fmt(s.tension_share_ppm, 3)} ppm of κ, taken out of G`;
  const thermal = s.temperature_K === null
    ? 'amplitude\'s thermal wander not in σ_Q (no inertia)'
    : `amplitude's thermal wander in σ_Q at ${fmt(s.temperature_K)} K (${s.temperature_source === 'recorded' ? 'from temp_C' : s.temperature_source === 'assumed' ? 'assumed' : 'environment.temperature_K'})`;
  return `${damping}; ${tension}; ${thermal}`;
}
