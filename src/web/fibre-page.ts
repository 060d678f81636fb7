/// <reference lib="dom" />
/**
 * One fibre across its runs (`fibre NAME --json`): κ, G, Q and creep per run
 * with their σ, any other per-run quantity the history carries (a numeric
 * field with a `_sigma` companion gets a chart of its own), and the flags
 * (`kappa_moved` and any other true/false field) marked on the charts and
 * listed in the table. Fields the history does not have are simply not drawn.
 */
import type { FibreListing } from '../../db/fibres.js';
import { fmt, withSigma } from '../display/format.js';
import { getJson } from './api.js';
import { Chart, ChartGroup, type Marker } from './charts.js';
import { el, facts, link, put, section, table } from './dom.js';
import { whenText } from './time-text.js';

type Row = Record<string, unknown> & { run: number; started_at: string; status: string };

/** Quantities drawn first, in this order, with how they are shown. */
const KNOWN: { key: string; sigma?: string; label: string; unit: string; scale: number; colour: string }[] = [
  { key: 'kappa_Nm_per_rad', sigma: 'kappa_sigma_Nm_per_rad', label: 'torsion constant κ', unit: 'N·m/rad', scale: 1, colour: '#2b4c6f' },
  { key: 'shear_modulus_Pa', sigma: 'shear_modulus_sigma_Pa', label: 'shear modulus G', unit: 'GPa', scale: 1e-9, colour: '#b5651d' },
  { key: 'q', sigma: 'q_sigma', label: 'Q', unit: '', scale: 1, colour: '#6a4c93' },
  { key: 'equilibrium_rate_rad_per_s', sigma: 'equilibrium_rate_sigma_rad_per_s', label: 'creep (equilibrium rate)', unit: 'rad/h', scale: 3600, colour: '#3b7a57' },
  { key: 'period_s', sigma: 'period_sigma_s', label: 'period', unit: 's', scale: 1, colour: '#4f6d7a' },
  { key: 'period_amplitude_slope_s_per_rad', sigma: 'period_amplitude_slope_sigma_s_per_rad', label: 'anelastic slope (period vs swing amplitude; 0 when elastic)', unit: 's/rad', scale: 1, colour: '#9c3d2e' },
];

/** Unit suffixes of field names (docs/commands.md: a name ends with its unit), longest first, and how they read. */
const UNITS: [string, string][] = [
  ['_Nm_per_rtHz', 'N·m/√Hz'], ['_rad_per_rtHz', 'rad/√Hz'], ['_Nm_per_rad', 'N·m/rad'], ['_rad_per_s', 'rad/s'], ['_s_per_rad', 's/rad'],
  ['_per_K', '1/K'], ['_per_s', '1/s'], ['_kg_m2', 'kg·m²'], ['_ppm', 'ppm'], ['_rad', 'rad'], ['_Hz', 'Hz'], ['_Pa', 'Pa'], ['_K', 'K'], ['_N', 'N'], ['_m', 'm'], ['_s', 's'],
];

/** A field's words and unit: `creep_rate_rad_per_s` → [`creep rate`, `rad/s`]. */
function splitUnit(key: string): [string, string] {
  for (const [suffix, unit] of UNITS) if (key.endsWith(suffix) && key.length > suffix.length) return [words(key.slice(0, -suffix.length)), unit];
  return [words(key), ''];
}
/** Numbers that are counts or labels, not quantities to chart. */
const NOT_QUANTITIES = new Set(['run', 'samples', 'windows', 'windows_ok', 'temp_C']);

/** The σ companion of a field: `_sigma` inserted somewhere in its name (docs/commands.md's naming rule). */
function sigmaOf(key: string, keys: string[]): string | undefined {
  return keys.find((k) => k !== key && k.includes('_sigma') && k.replace(/_sigma(_stat)?/, '') === key && !k.includes('_stat'));
}

/** A field name for people: `anelastic_slope_per_decade` → `anelastic slope per decade`. */
const words = (k: string) => k.replace(/_/g, ' ');

/** Fill `main` with fibre `name`'s history. */
export async function fibrePage(main: HTMLElement, name: string): Promise<void> {
  const enc = encodeURIComponent(name);
  const [rows, fibres] = await Promise.all([getJson<Row[]>(`/api/fibres/${enc}`), getJson<FibreListing[]>('/api/fibres')]);
  const f = fibres.find((x) => x.name === name);
  main.textContent = '';
  main.appendChild(el('h1', undefined, `Fibre ${name}`));
  if (f) {
    main.appendChild(facts([
      ['material', f.material ?? '—'],
      ['cross-section', f.diameter_m !== null ? `diameter ${fmt(f.diameter_m * 1e6)} µm` : f.width_m !== null ? `ribbon ${fmt(f.width_m * 1e6)} × ${fmt((f.thickness_m ?? NaN) * 1e6)} µm` : '—'],
      ['length', f.length_m !== null ? `${fmt(f.length_m)} m` : '—'],
      ['runs', `${rows.length}, ${whenText(f.first_run)} … ${whenText(f.last_run)}`],
    ]));
  }
  const keys = [...new Set(rows.flatMap((r) => Object.keys(r)))];
  const flags = keys.filter((k) => rows.some((r) => typeof r[k] === 'boolean'));
  const x = rows.map((r) => Date.parse(r.started_at) / 1000);
  const moved = (): Marker[] => rows.flatMap((r, i) => {
    const on = flags.filter((k) => r[k] === true);
    return on.length ? [{ x: x[i], severity: 'warning', label: on.map(words).join(', ') }] : [];
  });

  const box = put(main, section('Per run (±σ)')).lastChild as HTMLElement;
  if (rows.length === 0) box.appendChild(el('p', 'note', 'no runs'));
  const group = new ChartGroup();
  const drawn = new Set<string>();
  const chart = (key: string, sigma: string | undefined, label: string, unit: string, scale: number, colour: string) => {
    const ys = rows.map((r) => (typeof r[key] === 'number' ? (r[key] as number) * scale : null));
    if (!ys.some((v) => v !== null)) return;
    drawn.add(key);
    if (sigma) drawn.add(sigma);
    const ss = sigma ? rows.map((r) => (typeof r[sigma] === 'number' ? (r[sigma] as number) * scale : null)) : null;
    new Chart(box, {
      name: key, title: `${label}${unit ? ` (${unit})` : ''}`, x: 'time', yLabels: { y: unit || label }, markers: moved, height: 200,
      series: [{ label, color: colour, style: 'both', unit }],
    }, { x, y: [ys], sigma: [ss] }, group);
  };
  for (const k of KNOWN) chart(k.key, k.sigma, k.label, k.unit, k.scale, k.colour);
  // quantities this version of the page does not know by name (added to the history later): drawn as they come
  for (const k of keys) {
    if (drawn.has(k) || NOT_QUANTITIES.has(k) || k.includes('_sigma') || !rows.some((r) => typeof r[k] === 'number')) continue;
    const [label, unit] = splitUnit(k);
    chart(k, sigmaOf(k, keys), label, unit, 1, '#5b5b5b');
  }
  if (x.length) group.setFull(Math.min(...x) - 3600, Math.max(...x) + 3600);
  group.showAll();

  const t = section('Runs');
  const val = (r: Row, k: string, s?: string, scale = 1) => (typeof r[k] === 'number' ? withSigma((r[k] as number) * scale, s && typeof r[s] === 'number' ? (r[s] as number) * scale : null) : '—');
  t.appendChild(table(['run', 'started', 'status', 'period (s)', 'Q', 'κ (N·m/rad)', 'G (GPa)', 'creep (rad/h)', 'flags', 'notes'], rows.map((r) => [
    link(`/runs/${r.run}`, String(r.run)), whenText(r.started_at), [r.status, `state state-${r.status}`],
    val(r, 'period_s', 'period_sigma_s'), val(r, 'q', 'q_sigma'), val(r, 'kappa_Nm_per_rad', 'kappa_sigma_Nm_per_rad'),
    val(r, 'shear_modulus_Pa', 'shear_modulus_sigma_Pa', 1e-9), val(r, 'equilibrium_rate_rad_per_s', 'equilibrium_rate_sigma_rad_per_s', 3600),
    [flags.filter((k) => r[k] === true).map(words).join(', ') || '—', flags.some((k) => r[k] === true) ? 'flagged' : ''],
    notes(r),
  ])));
  main.appendChild(t);
  put(main, put(el('p', 'more'), 'JSON: ', link(`/api/fibres/${enc}`, `/api/fibres/${name}`)));
  document.body.dataset.ready = 'true';
}

/** Lists of words a row may carry (warnings, flags): their messages or names as text. */
function notes(r: Row): string {
  const out: string[] = [];
  for (const [k, v] of Object.entries(r)) {
    if (!Array.isArray(v)) continue;
    for (const x of v) out.push(typeof x === 'string' ? x : typeof x === 'object' && x && 'message' in x ? String((x as { message: unknown }).message) : `${k}`);
  }
  return out.join('; ');
}
