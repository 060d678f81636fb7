/**
 * The one-file report of a run: a single HTML file with the dashboard's
 * charts (the client bundle and uPlot inlined, the data inlined as JSON), so
 * it opens offline, zooms, and prints. The summary, warnings, events and the
 * cautions are plain HTML (readable without the script and on paper); the
 * charts are the run view, the swing amplitude, the configurations and the
 * noise budget of the dashboard (src/web).
 *
 * What is drawn is decimated so a week-long run stays small (docs/dashboard.md,
 * "The report"): the ok windows as columns of the plotted fields, the angle as
 * min/max buckets over the whole run plus finer layers for its first and last
 * stretches, the per-window points against the swing amplitude thinned
 * (report-summaries.ts), numbers rounded to what a chart shows.
 */
import { createHash } from 'node:crypto';
import type { ReadStore } from '../../db/read-store.js';
import { buildSummary, type ShowSummary } from '../summaries/show-summary.js';
import { buildNoiseBudget } from '../summaries/noise-budget.js';
import { budgetText, correctionsText } from '../summaries/budget-text.js';
import { withSigma, fmt, isoShort } from '../display/format.js';
import { escapeHtml as esc } from '../display/escape-html.js';
import { AngleTrace, type TraceAnswer } from './angle-trace.js';
import { windowColumns } from './window-columns.js';
import { loadWebAssets } from './web-assets.js';
import { reportAmplitude, reportComparison } from './report-summaries.js';
import type { CompareOptions } from '../summaries/compare-summary.js';
import type { ReportData, TraceLayer } from './report-data.js';

/** Options of renderReport. */
export interface ReportOptions {
  /** buckets of the angle over the whole run (default 6000) */
  overviewPoints?: number;
  /** length of the finely drawn first and last stretches of the angle, s (default 600) */
  detail_s?: number;
  /** buckets of each fine stretch (default 3000) */
  detailPoints?: number;
  /** events listed as rows in the file (default 1000: the newest; all of them are marked on the charts) */
  maxEventRows?: number;
  /** leave out the noise budget (it reads every sample: a week takes seconds) */
  noNoise?: boolean;
  /** the span the comparison of configurations covers (default: the whole run), as `compare --from-s --to-s` */
  compare?: Pick<CompareOptions, 'from_s' | 'to_s'>;
}

/** Significant digits kept per window field: enough for the chart (the period to better than 0.01 ppm). */
const DIGITS: Record<string, number> = {
  t_mid_s: 10, period_s: 12, period_sigma_s: 3, equilibrium_rad: 9, equilibrium_sigma_rad: 3, drift_rad_per_s: 4,
  amplitude_rad: 7, amplitude_sigma_rad: 3, q: 6, temp_C: 6,
};
const round = (x: number, digits: number): number => (x === 0 || !Number.isFinite(x) ? x : Number(x.toPrecision(digits)));

/** The safety cautions every report carries (defer to local rules and licensed practice). */
const CAUTIONS = [
  'Optical levers use lasers (typically class 2 to 3R): never look into the beam or its reflections, keep the beam path enclosed and away from eye level, and follow your laser safety officer and the local rules for the laser\'s class (IEC 60825-1).',
  'A fibre holds a suspended mass, and a break drops it: use a catcher, enclose the pendulum, and stay within the fibre\'s rated load.',
  'Vacuum housings: viewports and glass under vacuum can implode; use rated parts and guards.',
  'Limits computed here are guidance, not certification: local codes and licensed practice govern the apparatus.',
];

/** Build the report's HTML text for a run (a RuntimeError for an unknown run). */
export async function renderReport(store: ReadStore, runId: number, opts: ReportOptions = {}): Promise<string> {
  const s = await buildSummary(store, runId);
  const assets = loadWebAssets();
  const windows = await store.listWindows(runId);
  const evs = await store.listEvents(runId);

  const trace = new AngleTrace(store, runId);
  await trace.update();
  const overview = await trace.query(undefined, undefined, opts.overviewPoints ?? 6000);
  const layers: TraceLayer[] = [];
  if (overview.from_s !== null) {
    layers.push(layer(overview));
    const d = opts.detail_s ?? 600, dp = opts.detailPoints ?? 3000;
    const end = overview.to_s!;
    if (end > d) layers.push(layer(await trace.query(0, d, dp)));
    if (end > 2 * d) layers.push(layer(await trace.query(end - d, end, dp)));
  }
  let noise: ReportData['noise'] = null;
  let noiseNote = '';
  if (!opts.noNoise) {
    try {
      const r = await buildNoiseBudget(store, runId);
      noise = r.budget;
      noiseNote = r.notes.join(' ');
    } catch (e) {
      noiseNote = `no noise budget: ${(e as Error).message}`;
    }
  }
  const [amp, cmp] = await Promise.all([reportAmplitude(store, runId), reportComparison(store, runId, opts.compare)]);
  const data: ReportData = {
    summary: s,
    windows: windows.length,
    columns: windowColumns(windows, undefined, (f, v) => (f === 'index' ? v : round(v, DIGITS[f] ?? 6))),
    events: evs.map((e) => ({ t: e.t, t_s: e.t_s, kind: e.kind, severity: e.severity, state: e.state, message: e.message, value: e.value, threshold: e.threshold, data: null })),
    trace: layers,
    noise,
    amplitude: amp.amplitude,
    amplitude_windows: amp.windows,
    compare: cmp.compare,
  };
  const json = JSON.stringify(data).replace(/</g, '\\u003c');
  if (/<\/script/i.test(assets.js)) throw new Error('the client bundle contains "</script": it cannot be inlined');
  const sha = (t: string) => `'sha256-${createHash('sha256').update(t, 'utf8').digest('base64')}'`;
  // nothing may load or run but what is in the file: the one script and the one style sheet, by their hashes
  const csp = `default-src 'none'; script-src ${sha(assets.js)}; style-src ${sha(assets.css)}; img-src data:; base-uri 'none'; form-action 'none'`;

  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<meta http-equiv="Content-Security-Policy" content="${esc(csp)}">
<title>fibrewatch · run ${s.run}</title>
<style>${assets.css}</style>
</head><body data-page="report">
<header class="top"><span class="home">fibrewatch</span><span class="where">report · run ${s.run}</span></header>
<main id="main">
<div class="report-head"><h1>Run ${s.run} — ${esc(s.station)}, fibre ${esc(s.fibre)}</h1>
<p class="note">Generated by fibrewatch from the run's store at ${esc(isoShort(new Date().toISOString()))}. Units: SI; uncertainties are standard (1σ); times UTC.</p></div>
<section class="block"><h2>Summary</h2><table class="facts">${summaryRows(s).join('')}</table></section>
${warningsHtml(s.warnings)}
<section class="block"><h2>Charts</h2>
<p class="note">Drag across a chart to zoom, double-click for the whole run. This file holds the angle as min and max per ${esc(fmt(overview.bucket_s ?? 0))} s over the whole run${layers.length > 1 ? `, and finely for the first${layers.length > 2 ? ' and the last' : ''} ${esc(fmt((opts.detail_s ?? 600) / 60))} minutes` : ''}; the windows are those with status ok (${data.columns.index.length} of ${windows.length}).</p>
<div id="run-charts"></div></section>
<section class="block"><h2>Swing amplitude</h2>${amp.note ? `<p class="note">${esc(amp.note)}</p>` : ''}<div id="amplitude-charts"></div></section>
<section class="block"><h2>Configurations</h2>${cmp.note ? `<p class="note">${esc(cmp.note)}</p>` : ''}<div id="configurations"></div></section>
<section class="block"><h2>Noise budget</h2>${noiseNote ? `<p class="note">${esc(noiseNote)}</p>` : ''}<div id="noise-charts"></div></section>
${eventsHtml(evs, opts.maxEventRows ?? 1000)}
<section class="cautions"><h2>Cautions</h2><ul>${CAUTIONS.map((c) => `<li>${esc(c)}</li>`).join('')}</ul></section>
</main>
<script type="application/json" id="fw-data">${json}</script>
<script>${assets.js}</script>
</body></html>
`;
}

/** A trace answer as a report layer, rounded for the chart. */
function layer(t: TraceAnswer): TraceLayer {
  return {
    from_s: t.from_s ?? 0, to_s: t.to_s ?? 0, bucket_s: t.bucket_s, samples: t.samples,
    t_s: t.t_s.map((x) => round(x, 10)), min_rad: t.min_rad.map((x) => round(x, 6)), max_rad: t.max_rad.map((x) => round(x, 6)),
  };
}

/** The summary as table rows (the same words as `show`). */
function summaryRows(s: ShowSummary): string[] {
  const row = (k: string, v: string) => `<tr><th>${esc(k)}</th><td>${esc(v)}</td></tr>`;
  const rows = [
    row('station / fibre', `${s.station} / ${s.fibre}`),
    row('span (UTC)', `${isoShort(s.started_at)} → ${isoShort(s.ended_at, 'still recording')}`),
    row('status', s.status),
    row('samples / windows (ok) / gaps', `${s.samples} / ${s.windows} (${s.windows_ok}) / ${s.gaps}`),
    row('period', withSigma(s.period_s, s.period_sigma_s, 's')),
    row('Q (from the amplitude decay over the run)', withSigma(s.q, s.q_sigma)),
    row('equilibrium rate', withSigma(s.equilibrium_rate_rad_per_s === null ? null : s.equilibrium_rate_rad_per_s * 3600, s.equilibrium_rate_sigma_rad_per_s === null ? null : s.equilibrium_rate_sigma_rad_per_s * 3600, 'rad/h')),
  ];
  // total σ (statistical and the hand-measured inputs in quadrature), then the statistical part and what dominates
  const stat = (v: number | null | undefined, unit: string, k = 1) => (v == null ? '' : ` · statistical part ±${fmt(v / k, 2)} ${unit}`);
  const parts = (b: string) => (b ? ` — ${b}` : '');
  if (s.kappa_Nm_per_rad !== undefined) {
    rows.push(row('torsion constant κ', withSigma(s.kappa_Nm_per_rad, s.kappa_sigma_Nm_per_rad, 'N·m/rad') + parts(budgetText(s.kappa_sigma_budget) + stat(s.kappa_sigma_stat_Nm_per_rad, 'N·m/rad'))));
  }
  if (s.shear_modulus_Pa != null) {
    rows.push(row('shear modulus G', withSigma(s.shear_modulus_Pa / 1e9, (s.shear_modulus_sigma_Pa ?? 0) / 1e9, 'GPa') + parts(budgetText(s.shear_modulus_sigma_budget) + stat(s.shear_modulus_sigma_stat_Pa, 'GPa', 1e9))));
  }
  if (s.amplitude_rad !== null) rows.push(row('amplitude (last window)', `${fmt(s.amplitude_rad)} rad`));
  if (s.period_amplitude_slope_s_per_rad !== null) {
    rows.push(row('period vs swing amplitude', `${withSigma(s.period_amplitude_slope_s_per_rad, s.period_amplitude_slope_sigma_s_per_rad, 's/rad')} (anelasticity: 0 for an elastic fibre)`));
  }
  const n = s.noise;
  if (n?.equilibrium_adev_min_rad != null) rows.push(row('equilibrium stability floor', `${fmt(n.equilibrium_adev_min_rad)} rad at τ = ${fmt(n.equilibrium_adev_min_tau_s)} s (lowest Allan deviation)`));
  if (n?.period_adev_min != null) rows.push(row('period stability floor', `${fmt(n.period_adev_min * 1e6)} ppm at τ = ${fmt(n.period_adev_min_tau_s)} s`));
  if (n?.thermal_angle_rms_rad != null) rows.push(row('thermal angle rms √(k_B·T/κ)', `${fmt(n.thermal_angle_rms_rad)} rad`));
  rows.push(row('corrections', correctionsText(s)));
  for (const a of s.alerts) rows.push(row(`alert ${a.kind}`, `${a.state ?? ''} at ${isoShort(a.t)} — ${a.message}`));
  return rows;
}

/** `show --json`'s warnings (nothing when there are none). */
function warningsHtml(w: ShowSummary['warnings']): string {
  if (!w.length) return '';
  return `<section class="warnings"><h2>Warnings</h2><ul>${w.map((x) => `<li><span class="kind">${esc(x.kind)}</span> ${esc(x.message)}</li>`).join('')}</ul></section>`;
}

/** The events as a table: the newest `max` of them, with a note when there are more. */
function eventsHtml(evs: Awaited<ReturnType<ReadStore['listEvents']>>, max: number): string {
  const shown = evs.slice(-max);
  const more = shown.length < evs.length ? `<p class="note">the newest ${shown.length} of ${evs.length} (all of them are marked on the charts; \`fibrewatch events RUN\` lists every one)</p>` : '';
  const rows = shown.map((e) => `<tr><td>${esc(isoShort(e.t))}</td><td>${esc(e.t_s.toFixed(1))}</td><td>${esc(e.kind)}</td><td>${esc(e.state ?? '')}</td><td class="sev-${esc(e.severity)}">${esc(e.severity)}</td><td>${esc(fmt(e.value))}</td><td>${esc(e.message)}</td></tr>`).join('');
  return `<section class="block"><h2>Events (${evs.length})</h2>${more}
<table class="data"><thead><tr><th>time (UTC)</th><th>t_s (s)</th><th>kind</th><th>state</th><th>level</th><th>value</th><th>what happened</th></tr></thead><tbody>${rows}</tbody></table></section>`;
}
