/**
 * A self-contained HTML report of one run: the summary, plots of the window
 * results (period, equilibrium, amplitude), a stretch of raw angle, and the
 * events. No external assets: plots are inline SVG.
 */
import { readAllSamples, type ReadStore } from '../../db/read-store.js';
import { buildSummary } from '../summaries/show-summary.js';
import { withSigma, fmt, isoShort } from '../display/format.js';
import { plotSvg } from './svg-plot.js';
import { budgetText, correctionsText } from '../summaries/budget-text.js';
import { escapeHtml as esc } from '../display/escape-html.js';


/** Build the report's HTML text for a run. */
export async function renderReport(store: ReadStore, runId: number): Promise<string> {
  const s = await buildSummary(store, runId);
  const ws = (await store.listWindows(runId)).filter((w) => w.status === 'ok');
  const evs = await store.listEvents(runId);
  const h = (x: number) => x / 3600;
  const tx = ws.map((w) => h(w.t_mid_s));
  const alertMarks = evs.filter((e) => e.state === 'raised').map((e) => ({ x: h(e.t_s), label: `${e.kind} raised: ${e.message}` }));
  // deviations from the run's median period: a step shows as a step, not as an offset of everything
  const sorted = ws.map((w) => w.period_s!).sort((a, b) => a - b);
  const ref = sorted.length ? sorted[sorted.length >> 1] : null;
  const ppm = ref ? ws.map((w) => ((w.period_s! - ref) / ref) * 1e6) : [];
  const plots = [
    plotSvg([{ x: tx, y: ppm, sigma: ws.map((w) => (w.period_sigma_s! / (ref ?? 1)) * 1e6), label: 'period − median', points: true }],
      { title: `Period (median ${ref?.toPrecision(8) ?? '—'} s; run mean ${withSigma(s.period_s, s.period_sigma_s, 's')})`, xLabel: 'time since start (h)', yLabel: 'ppm', markers: alertMarks, robust: true }),
    plotSvg([{ x: tx, y: ws.map((w) => w.equilibrium_rad! * 1e6), sigma: ws.map((w) => w.equilibrium_sigma_rad! * 1e6), label: 'equilibrium', points: true }],
      { title: 'Equilibrium', xLabel: 'time since start (h)', yLabel: 'µrad', markers: alertMarks, robust: true }),
    plotSvg([{ x: tx, y: ws.map((w) => w.amplitude_rad! * 1e3), label: 'amplitude' }],
      { title: 'Amplitude', xLabel: 'time since start (h)', yLabel: 'mrad' }),
  ];
  const temps = ws.filter((w) => w.temp_C !== null);
  if (temps.length) plots.push(plotSvg([{ x: temps.map((w) => h(w.t_mid_s)), y: temps.map((w) => w.temp_C!), label: 'temperature' }], { title: 'Temperature', xLabel: 'time since start (h)', yLabel: '°C' }));
  // the first ten minutes of raw angle, to see the signal itself
  const raw = await readAllSamples(store, runId, 'angle', { from_s: 0, to_s: 600 });
  plots.push(plotSvg([{ x: raw.t, y: Array.from(raw.v, (v) => v * 1e3), label: 'angle' }], { title: 'Angle, first 10 minutes', xLabel: 'time since start (s)', yLabel: 'mrad' }));

  const row = (k: string, v: string) => `<tr><th>${esc(k)}</th><td>${esc(v)}</td></tr>`;
  const summary = [
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
    summary.push(row('torsion constant κ', withSigma(s.kappa_Nm_per_rad, s.kappa_sigma_Nm_per_rad, 'N·m/rad') + parts(budgetText(s.kappa_sigma_budget) + stat(s.kappa_sigma_stat_Nm_per_rad, 'N·m/rad'))));
  }
  if (s.shear_modulus_Pa != null) {
    summary.push(row('shear modulus G', withSigma(s.shear_modulus_Pa / 1e9, (s.shear_modulus_sigma_Pa ?? 0) / 1e9, 'GPa') + parts(budgetText(s.shear_modulus_sigma_budget) + stat(s.shear_modulus_sigma_stat_Pa, 'GPa', 1e9))));
  }
  summary.push(row('corrections', correctionsText(s)));
  const evRows = evs.map((e) => `<tr class="sev-${esc(e.severity)}"><td>${esc(e.t.replace(/\.\d{3}Z$/, 'Z'))}</td><td>${esc(e.kind)}</td><td>${esc(e.state ?? '')}</td><td>${esc(e.severity)}</td><td>${esc(fmt(e.value))}</td><td>${esc(e.message)}</td></tr>`).join('');
  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>fibrewatch · run ${s.run}</title>
<style>
body{font:14px/1.4 system-ui,sans-serif;margin:24px auto;max-width:820px;color:#222}
h1{font-size:20px;margin-bottom:4px} h2{font-size:16px;margin-top:28px}
table{border-collapse:collapse} th,td{padding:3px 10px;text-align:left;border-bottom:1px solid #eee;vertical-align:top}
th{color:#555;font-weight:500} .sev-alarm td{color:#a00} .sev-warning td{color:#8a5a00}
.note{color:#666;font-size:12px}
</style></head><body>
<h1>Run ${s.run} — ${esc(s.station)}, fibre ${esc(s.fibre)}</h1>
<p class="note">Generated by fibrewatch from the run's store. Units: SI; uncertainties are standard (1σ).</p>
<h2>Summary</h2><table>${summary.join('')}</table>
<h2>Window results</h2>${plots.join('\n')}
<h2>Events (${evs.length})</h2>
<table><tr><th>time (UTC)</th><th>kind</th><th>state</th><th>level</th><th>value</th><th>what happened</th></tr>${evRows}</table>
<h2>Cautions</h2>
<p class="note">Optical levers use lasers: never look into the beam or its reflections; follow the local rules for the laser's class.
A fibre holds a suspended mass: use a catcher and stay within the rated load. Vacuum glass can implode.
Limits computed here are guidance, not certification; local codes and licensed practice govern the apparatus.</p>
</body></html>
`;
}
