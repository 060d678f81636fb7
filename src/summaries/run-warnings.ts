/**
 * Sanity checks of a run's derived constants against what the station file
 * says it is made of, as `warnings: [{ kind, message }]` for `show`, `fibre`
 * and the report. Each message names the values and the likely causes:
 *
 * - `derived-out-of-range`: G more than 30 % outside the material's handbook
 *   span (src/physics/materials.ts), i.e. κ far from what the geometry
 *   predicts. G comes from κ = I·ω₀² and the dimensions, G ∝ I·L/d⁴: the
 *   inertia, the diameter (to the 4th power), the length or the material;
 * - `material-ambiguous`, `material-unknown`: no handbook check is possible;
 * - `inertia-out-of-range`: the stated inertia is not what the parts list
 *   gives (more than 10 % apart), or the parts weigh more than the stated mass;
 * - `period-out-of-band`: many windows fitted a period outside the band
 *   searched around the running estimate, or the run's period is far from
 *   `analysis.period_guess_s`;
 * - `amplitude-near-limit`: the swing reached `alerts.twist_fraction` of the
 *   fibre's elastic twist limit (a safety matter: a fibre twisted past it
 *   creeps and may break and drop the pendulum).
 */
import type { WindowResult } from '../domain/window-result.js';
import type { Station } from '../config/station.js';
import type { RunSummaryNumbers } from '../analysis/run-summary.js';
import { twistLimitFor } from '../config/derive-context.js';
import { ambiguousMaterial, lookupMaterial, shearModulusDeviation } from '../physics/materials.js';
import { inertiaFromParts } from '../physics/inertia.js';
import { suspendedWeight } from '../physics/load.js';
import { kappaRibbon, kappaRound } from '../physics/torsion.js';
import { FIT_STATUS } from '../analysis/fit-status.js';
import { fmt, withSigma } from '../display/format.js';

/** One warning about a run. */
export interface RunWarning {
  kind: 'derived-out-of-range' | 'material-ambiguous' | 'material-unknown' | 'inertia-out-of-range' | 'period-out-of-band' | 'amplitude-near-limit';
  message: string;
}

/** G more than this far outside the handbook span (relative to its nearer end) is a warning. */
export const DERIVED_TOLERANCE = 0.3;
/** A stated inertia this far from the parts list's is a warning. */
export const INERTIA_TOLERANCE = 0.1;
/** Share (and least number) of windows fitted outside the searched band that is a warning. */
const OUT_OF_BAND_SHARE = 0.05, OUT_OF_BAND_MIN = 3;
/** A run's period this far from analysis.period_guess_s is a warning. */
const GUESS_TOLERANCE = 0.2;

const pct = (x: number): string => `${fmt(Math.abs(x) * 100, 2)} %`;
const gpa = (x: number): string => `${fmt(x / 1e9, 4)} GPa`;

/** The warnings for a run summarised as `s`, recorded with `station` (null: the stored station no longer validates). */
export function runWarnings(station: Station | null, s: RunSummaryNumbers, windows: readonly WindowResult[]): RunWarning[] {
  const out: RunWarning[] = [];
  if (!station) return out;
  materialChecks(station, s, out);
  inertiaChecks(station, out);
  periodChecks(station, s, windows, out);
  amplitudeChecks(station, windows, out);
  return out;
}

function materialChecks(st: Station, s: RunSummaryNumbers, out: RunWarning[]): void {
  const f = st.fibre;
  if (f.material === undefined) return;
  const m = lookupMaterial(f.material);
  if (!m) {
    const cands = ambiguousMaterial(f.material);
    if (cands) {
      const spans = cands.map((c) => {
        const r = lookupMaterial(c)!.shearModulusRange;
        return `${c} (G ${fmt(r.lo_Pa / 1e9, 3)}–${fmt(r.hi_Pa / 1e9, 3)} GPa)`;
      });
      out.push({ kind: 'material-ambiguous', message: `fibre.material ${JSON.stringify(f.material)} could be ${spans.join(' or ')}: name the alloy for the handbook check of G and for the twist limit` });
    } else {
      out.push({ kind: 'material-unknown', message: `fibre.material ${JSON.stringify(f.material)} is not in the materials table: G is not checked against a handbook value` });
    }
    return;
  }
  const G = s.shear_modulus_Pa;
  if (G === null || !(G > 0)) return;
  // the station may state its own G (fibre.shear_modulus_Pa): then that is the expectation
  const lo = f.shear_modulus_Pa ?? m.shearModulusRange.lo_Pa, hi = f.shear_modulus_Pa ?? m.shearModulusRange.hi_Pa;
  const dev = f.shear_modulus_Pa !== undefined ? (G > hi ? G / hi - 1 : G < lo ? G / lo - 1 : 0) : shearModulusDeviation(m, G);
  if (Math.abs(dev) <= DERIVED_TOLERANCE) return;
  const expected = f.shear_modulus_Pa !== undefined ? `the station's fibre.shear_modulus_Pa ${gpa(hi)}` : `${m.name}'s handbook ${fmt(lo / 1e9, 4)}–${fmt(hi / 1e9, 4)} GPa`;
  const Gref = dev > 0 ? hi : lo;
  // what each input would have to be for G to reach the span (G ∝ I·L/d⁴, ribbon ∝ I·L/(w·t³); the tension term neglected)
  const ratio = Gref / G;
  const I = st.pendulum.inertia_kg_m2 ?? (st.pendulum.parts?.length ? inertiaFromParts(st.pendulum.parts) : undefined);
  const causes: string[] = [];
  if (I !== undefined) causes.push(`the inertia (G ∝ I: it would have to be ${fmt(I * ratio, 3)} kg·m² instead of ${fmt(I, 3)})`);
  if (f.diameter_m !== undefined) causes.push(`the diameter (G ∝ d⁻⁴: ${fmt(f.diameter_m * ratio ** -0.25 * 1e6, 4)} µm instead of ${fmt(f.diameter_m * 1e6, 4)} µm would do)`);
  else if (f.thickness_m !== undefined) causes.push(`the thickness (G ∝ t⁻³: ${fmt(f.thickness_m * ratio ** (-1 / 3) * 1e6, 4)} µm instead of ${fmt(f.thickness_m * 1e6, 4)} µm would do)`);
  if (f.length_m !== undefined) causes.push(`the length (G ∝ L: ${fmt(f.length_m * ratio, 3)} m instead of ${fmt(f.length_m, 3)} m)`);
  causes.push(`the material (fibre.material ${JSON.stringify(f.material)})`);
  // κ against the geometry's prediction with the handbook G and the tension term
  let kappaText = '';
  const F = st.pendulum.mass_kg === undefined ? 0 : suspendedWeight(st.pendulum.mass_kg);
  const Gnom = f.shear_modulus_Pa ?? m.shearModulus.value;
  const kPred = f.length_m === undefined ? undefined
    : f.diameter_m !== undefined ? kappaRound(Gnom, f.diameter_m, f.length_m, F)
      : f.width_m !== undefined && f.thickness_m !== undefined ? kappaRibbon(Gnom, f.width_m, f.thickness_m, f.length_m, F) : undefined;
  if (kPred !== undefined && s.kappa_Nm_per_rad !== null) {
    kappaText = `; κ = ${withSigma(s.kappa_Nm_per_rad, s.kappa_sigma_Nm_per_rad, 'N·m/rad')} against ${fmt(kPred, 4)} N·m/rad predicted by the geometry`;
  }
  out.push({
    kind: 'derived-out-of-range',
    message: `G = ${withSigma(G / 1e9, (s.shear_modulus_sigma_Pa ?? 0) / 1e9, 'GPa')} is ${pct(dev)} ${dev > 0 ? 'above' : 'below'} ${expected}${kappaText}. Likely causes: ${causes.join('; ')}`,
  });
}

function inertiaChecks(st: Station, out: RunWarning[]): void {
  const p = st.pendulum;
  if (!p.parts?.length) return;
  let fromParts: number;
  try {
    fromParts = inertiaFromParts(p.parts);
  } catch {
    return;
  }
  if (p.inertia_kg_m2 !== undefined) {
    const rel = p.inertia_kg_m2 / fromParts - 1;
    const sig = (p.inertia_sigma_kg_m2 ?? 0) / p.inertia_kg_m2;
    if (Math.abs(rel) > Math.max(INERTIA_TOLERANCE, 3 * sig)) {
      out.push({
        kind: 'inertia-out-of-range',
        message: `pendulum.inertia_kg_m2 = ${fmt(p.inertia_kg_m2, 4)} kg·m² is ${pct(rel)} ${rel > 0 ? 'above' : 'below'} the ${fmt(fromParts, 4)} kg·m² of pendulum.parts: κ and G use the stated value; check which is right (a part missing from the list, an offset measured to the wrong point, an inertia measured on another assembly)`,
      });
    }
  }
  if (p.mass_kg !== undefined) {
    const parts = p.parts.reduce((a, q) => a + q.mass_kg * (q.count ?? 1), 0);
    if (parts > p.mass_kg * (1 + 1e-9)) {
      out.push({ kind: 'inertia-out-of-range', message: `pendulum.parts weigh ${fmt(parts, 4)} kg, more than pendulum.mass_kg = ${fmt(p.mass_kg, 4)} kg: one of them is wrong (the mass sets the tension term of κ, the parts the inertia)` });
    }
  }
}

function periodChecks(st: Station, s: RunSummaryNumbers, windows: readonly WindowResult[], out: RunWarning[]): void {
  const outside = windows.filter((w) => w.status === FIT_STATUS.periodOutsideWindow).length;
  if (windows.length && outside >= OUT_OF_BAND_MIN && outside / windows.length >= OUT_OF_BAND_SHARE) {
    out.push({
      kind: 'period-out-of-band',
      message: `${outside} of ${windows.length} windows (${pct(outside / windows.length)}) fitted a period outside the band searched around the running estimate: a second mode of the pendulum (a swing or a bounce on the fibre), a period that jumps, or a period guess far off; see \`fibrewatch windows\``,
    });
  }
  const guess = st.analysis.period_guess_s;
  if (guess !== undefined && s.period_s !== null && Math.abs(s.period_s / guess - 1) > GUESS_TOLERANCE) {
    out.push({
      kind: 'period-out-of-band',
      message: `the run's period ${fmt(s.period_s, 5)} s is ${pct(s.period_s / guess - 1)} ${s.period_s > guess ? 'above' : 'below'} analysis.period_guess_s = ${fmt(guess, 5)} s: the first windows and the decimation were set for the guess; correct it in the station file`,
    });
  }
}

function amplitudeChecks(st: Station, windows: readonly WindowResult[], out: RunWarning[]): void {
  const lim = twistLimitFor(st);
  if (!lim || !(lim.theta_max_rad > 0)) return;
  let top = 0, at = 0;
  for (const w of windows) if (w.status === 'ok' && w.amplitude_rad !== null && Math.abs(w.amplitude_rad) > top) { top = Math.abs(w.amplitude_rad); at = w.t_mid_s; }
  const frac = st.alerts.twist_fraction;
  if (top >= frac * lim.theta_max_rad) {
    out.push({
      kind: 'amplitude-near-limit',
      message: `the swing reached ${fmt(top, 3)} rad at t = ${fmt(at, 4)} s, ${pct(top / lim.theta_max_rad)} of the fibre's elastic twist limit ${fmt(lim.theta_max_rad, 3)} rad (alerts.twist_fraction ${fmt(frac, 2)}; ${lim.basis}): keep it well inside — a fibre twisted past its limit creeps and may break and drop the pendulum (use a catcher; the limit is guidance from handbook values, not a rating)`,
    });
  }
}
