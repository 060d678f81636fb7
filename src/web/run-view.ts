/// <reference lib="dom" />
/**
 * One run on one time axis: the angle (min and max per bucket, fetched again
 * for whatever span is in view), the period in ppm, the equilibrium with its
 * drift, amplitude and Q, temperature — alerts and events marked on each —
 * then the summary with σ, the warnings and the events. Used by the live run
 * page (data from the server) and by the one-file report (data inlined).
 */
import type { EventListing } from '../../db/events-store.js';
import type { ShowSummary } from '../summaries/show-summary.js';
import type { TraceAnswer } from '../report/angle-trace.js';
import { emptyColumns, windowColumns, type WindowColumns } from '../report/window-columns.js';
import { budgetText, correctionsText } from '../summaries/budget-text.js';
import { duration, fmt, withSigma } from '../display/format.js';
import { Chart, ChartGroup, type Marker } from './charts.js';
import { clear, el, facts, put, section, table } from './dom.js';
import { whenText } from './time-text.js';

/** A summary as the page gets it: `show --json`, with the fields other versions may add. */

/** Where the run's data come from. */
export interface RunSource {
  /** the angle over [from_s, to_s) (s since the run's start; undefined: the whole run) in at most `points` buckets */
  trace(from_s: number | undefined, to_s: number | undefined, points: number): Promise<TraceAnswer>;
}

/** What to draw besides the charts. */
export interface RunViewOptions {
  /** the summary and events as tables, and the title, status, warnings and alerts above the charts (the report has them as static HTML already) */
  tables: boolean;
}

const COLOURS = { angle: '#2b4c6f', period: '#b5651d', equilibrium: '#3b7a57', drift: '#8c8c8c', amplitude: '#6a4c93', q: '#8c8c8c', temp: '#9c3d2e' };

/** The run's charts and tables, updatable as news arrives. */
export class RunView {
  private summary: ShowSummary;
  private columns: WindowColumns = emptyColumns();
  private readonly windowIndexes = new Set<number>();
  private events: EventListing[] = [];
  private readonly eventKeys = new Set<string>();
  private readonly group: ChartGroup;
  private charts: Record<string, Chart> = {};
  private readonly chartBox: HTMLElement;
  private readonly header: HTMLElement;
  private readonly tablesBox: HTMLElement;
  /** room between the time charts and the tables for sections of the page's own (the swing amplitude, the configurations) */
  readonly extras: HTMLElement;
  private traceSeq = 0;
  private traceTimer: ReturnType<typeof setTimeout> | undefined;
  private end_s = 0;
  /** follow the live end: the span in view moves with new data */
  follow = true;
  /** the run is still recording: its span reaches up to now */
  recording = false;

  constructor(private readonly root: HTMLElement, private readonly source: RunSource, summary: ShowSummary, private readonly opts: RunViewOptions) {
    this.summary = summary;
    this.recording = summary.status === 'recording';
    this.header = put(root, el('div', 'run-head')).lastChild as HTMLElement;
    const controls = put(root, el('div', 'controls')).lastChild as HTMLElement;
    this.chartBox = put(root, el('div', 'charts')).lastChild as HTMLElement;
    this.extras = put(root, el('div', 'extras')).lastChild as HTMLElement;
    this.tablesBox = put(root, el('div', 'tables')).lastChild as HTMLElement;
    this.group = new ChartGroup((min, max) => this.rangeChanged(min, max));
    this.controls(controls);
    this.renderHeader();
  }

  /** Unix time of the run's start, s. */
  private get start(): number {
    return Date.parse(this.summary.started_at ?? '') / 1000;
  }

  /** Windows (rows of `windows --json` or stored results): the ok ones are drawn; repeats are ignored. */
  addWindows(rows: readonly ({ index: number; status: string } & Record<string, unknown>)[]): number {
    const fresh = rows.filter((w) => !this.windowIndexes.has(w.index));
    for (const w of fresh) this.windowIndexes.add(w.index);
    if (!fresh.length) return 0;
    const sorted = [...fresh].sort((a, b) => a.index - b.index);
    const last = this.columns.index[this.columns.index.length - 1] ?? -1;
    if (sorted[0].index > last) windowColumns(sorted as never, this.columns);
    else {
      // out of order (a page that reconnected): rebuild in index order
      const all = [...this.allRows, ...sorted].sort((a, b) => a.index - b.index);
      this.columns = windowColumns(all as never);
    }
    this.allRows.push(...sorted);
    for (const w of sorted) this.end_s = Math.max(this.end_s, Number(w.t_end_s ?? w.t_mid_s ?? 0));
    this.root.dataset.windows = String(this.windowIndexes.size);
    return fresh.length;
  }
  private allRows: ({ index: number; status: string } & Record<string, unknown>)[] = [];

  /** Columns of ok windows directly (the report's inlined form). */
  setColumns(c: WindowColumns, windows: number): void {
    this.columns = c;
    this.root.dataset.windows = String(windows);
    const n = c.t_mid_s.length;
    if (n) this.end_s = Math.max(this.end_s, c.t_mid_s[n - 1]);
  }

  /** Events (rows of `events --json`); repeats are ignored. */
  addEvents(evs: readonly EventListing[]): number {
    let n = 0;
    for (const e of evs) {
      const k = JSON.stringify([e.t_s, e.kind, e.state, e.message, e.value]);
      if (this.eventKeys.has(k)) continue;
      this.eventKeys.add(k);
      this.events.push(e);
      n++;
    }
    if (n) this.events.sort((a, b) => a.t_s - b.t_s);
    return n;
  }

  /** A fresh summary (after new windows). */
  setSummary(s: ShowSummary): void {
    this.summary = s;
    this.recording = s.status === 'recording';
    this.renderHeader();
    if (this.opts.tables) this.renderTables();
  }

  /** Where the stored data end, s since the start (grows while recording). */
  extendTo(t_s: number): void {
    this.end_s = Math.max(this.end_s, t_s);
  }

  /** Draw everything (first time) or redraw with the data held now. */
  async render(): Promise<void> {
    const first = Object.keys(this.charts).length === 0;
    const trace = await this.source.trace(undefined, undefined, this.points());
    if (trace.to_s !== null) this.end_s = Math.max(this.end_s, trace.to_s);
    const full = this.fullSpan();
    this.group.setFull(full[0], full[1]);
    if (first) {
      this.makeCharts(trace);
      this.group.show(full[0], full[1]);
    } else this.updateWindowCharts();
    if (this.opts.tables) this.renderTables();
  }

  /** New windows or events arrived: redraw those charts (and, when following, move the span to the new end). */
  refresh(): void {
    const full = this.fullSpan();
    this.group.setFull(full[0], full[1]);
    this.updateWindowCharts();
    if (this.opts.tables) this.renderTables();
    if (this.follow) {
      const v = this.group.visible();
      const width = v ? v[1] - v[0] : full[1] - full[0];
      const atStart = v && Math.abs(v[0] - full[0]) < 1e-6 * Math.max(1, width);
      // the whole run in view: keep it whole; a zoomed span: slide it to the end
      if (atStart || !v) this.group.show(full[0], full[1]);
      else this.group.show(full[1] - width, full[1]);
    }
  }

  private fullSpan(): [number, number] {
    const s = this.start;
    const endMs = this.summary.ended_at ? Date.parse(this.summary.ended_at) : NaN;
    const live = this.recording ? Date.now() / 1000 : -Infinity;
    const end = Number.isFinite(endMs) ? Math.max(endMs / 1000, s + this.end_s) : Math.max(live, s + Math.max(this.end_s, 1));
    return [s, end > s ? end : s + 1];
  }

  private points(): number {
    return Math.max(200, Math.min(4000, Math.round(this.chartBox.clientWidth || 1000)));
  }

  private markers = (): Marker[] => this.events.map((e) => ({ x: this.start + e.t_s, severity: e.severity, label: `${e.kind}: ${e.message}` }));

  private makeCharts(trace: TraceAnswer): void {
    const box = this.chartBox;
    clear(box);
    const m = this.markers;
    this.charts.angle = new Chart(box, {
      name: 'angle', title: angleTitle(trace), x: 'time', yLabels: { y: 'angle (mrad)' }, markers: m, height: 240,
      series: [{ label: 'min', color: COLOURS.angle, unit: 'mrad', width: 1 }, { label: 'max', color: COLOURS.angle, unit: 'mrad', width: 1 }],
      bands: [[1, 2]],
    }, this.traceData(trace), this.group);
    this.charts.period = new Chart(box, {
      name: 'period', title: this.periodTitle(), x: 'time', yLabels: { y: 'period − mean (ppm)' }, markers: m,
      series: [{ label: 'period', color: COLOURS.period, style: 'points', unit: 'ppm' }],
    }, this.periodData(), this.group);
    this.charts.equilibrium = new Chart(box, {
      name: 'equilibrium', title: 'equilibrium (per window, ±σ) and its drift within each window', x: 'time',
      yLabels: { y: 'equilibrium (µrad)', d: 'drift (µrad/h)' }, markers: m,
      series: [{ label: 'equilibrium', color: COLOURS.equilibrium, style: 'points', unit: 'µrad' }, { label: 'drift', color: COLOURS.drift, scale: 'd', unit: 'µrad/h', dash: [4, 3] }],
    }, this.equilibriumData(), this.group);
    this.charts.amplitude = new Chart(box, {
      name: 'amplitude', title: 'amplitude and Q per window', x: 'time', yLabels: { y: 'amplitude (mrad)', q: 'Q' }, markers: m,
      series: [{ label: 'amplitude', color: COLOURS.amplitude, style: 'both', unit: 'mrad' }, { label: 'Q', color: COLOURS.q, scale: 'q', style: 'points' }],
    }, this.amplitudeData(), this.group);
    if (this.columns.temp_C.some((x) => x !== null)) this.makeTempChart();
  }

  private makeTempChart(): void {
    this.charts.temperature = new Chart(this.chartBox, {
      name: 'temperature', title: 'temperature (window mean)', x: 'time', yLabels: { y: '°C' }, markers: this.markers,
      series: [{ label: 'temperature', color: COLOURS.temp, unit: '°C', style: 'both' }],
    }, this.tempData(), this.group);
  }

  private updateWindowCharts(): void {
    if (!this.charts.period) return;
    this.charts.period.setData(this.periodData());
    this.charts.equilibrium.setData(this.equilibriumData());
    this.charts.amplitude.setData(this.amplitudeData());
    if (this.charts.temperature) this.charts.temperature.setData(this.tempData());
    else if (this.columns.temp_C.some((x) => x !== null)) this.makeTempChart();
    this.charts.angle.u.redraw();
  }

  private xs(): number[] {
    const s = this.start;
    return this.columns.t_mid_s.map((t) => s + t);
  }

  /** The period's reference: the run's weighted mean, else the median of the windows. */
  private periodRef(): number | null {
    if (this.summary.period_s) return this.summary.period_s;
    const p = this.columns.period_s.filter((x): x is number => x !== null).sort((a, b) => a - b);
    return p.length ? p[p.length >> 1] : null;
  }

  private periodTitle(): string {
    const ref = this.periodRef();
    return ref === null ? 'period (no window fitted yet)' : `period − ${withSigma(this.summary.period_s, this.summary.period_sigma_s, 's')} (run mean), ppm, ±σ`;
  }

  private periodData() {
    const ref = this.periodRef() ?? 1;
    const c = this.columns;
    return {
      x: this.xs(),
      y: [c.period_s.map((p) => (p === null ? null : ((p - ref) / ref) * 1e6))],
      sigma: [c.period_sigma_s.map((s) => (s === null ? null : (s / ref) * 1e6))],
    };
  }

  private equilibriumData() {
    const c = this.columns;
    return {
      x: this.xs(),
      y: [c.equilibrium_rad.map((v) => (v === null ? null : v * 1e6)), c.drift_rad_per_s.map((v) => (v === null ? null : v * 1e6 * 3600))],
      sigma: [c.equilibrium_sigma_rad.map((v) => (v === null ? null : v * 1e6)), null],
    };
  }

  private amplitudeData() {
    const c = this.columns;
    return {
      x: this.xs(),
      y: [c.amplitude_rad.map((v) => (v === null ? null : v * 1e3)), c.q],
      sigma: [c.amplitude_sigma_rad.map((v) => (v === null ? null : v * 1e3)), null],
    };
  }

  private tempData() {
    return { x: this.xs(), y: [this.columns.temp_C] };
  }

  private traceData(t: TraceAnswer) {
    const s = this.start;
    // a break in the line where buckets are missing (a gap in the samples)
    const x: number[] = [], lo: (number | null)[] = [], hi: (number | null)[] = [];
    const step = t.bucket_s ?? medianStep(t.t_s);
    for (let i = 0; i < t.t_s.length; i++) {
      if (i > 0 && step > 0 && t.t_s[i] - t.t_s[i - 1] > 2.5 * step) {
        x.push(s + (t.t_s[i] + t.t_s[i - 1]) / 2);
        lo.push(null);
        hi.push(null);
      }
      x.push(s + t.t_s[i]);
      lo.push(t.min_rad[i] * 1e3);
      hi.push(t.max_rad[i] * 1e3);
    }
    return { x, y: [lo, hi] };
  }

  /** The span in view changed: fetch the angle for it (debounced; only the latest answer is drawn). */
  private rangeChanged(min: number, max: number): void {
    clearTimeout(this.traceTimer);
    this.traceTimer = setTimeout(async () => {
      const seq = ++this.traceSeq;
      const s = this.start;
      const full = this.fullSpan();
      const whole = Math.abs(min - full[0]) < 1e-9 * Math.abs(full[0]) && Math.abs(max - full[1]) < 1e-9 * Math.abs(full[1]);
      let t: TraceAnswer;
      try {
        t = await this.source.trace(whole ? undefined : Math.max(0, min - s), whole ? undefined : max - s, this.points());
      } catch {
        return; // the server is away: the angle drawn stays, the next change of span asks again
      }
      if (seq !== this.traceSeq || !this.charts.angle) return;
      this.charts.angle.setData(this.traceData(t));
      const title = this.charts.angle.figure.querySelector('.u-title');
      if (title) title.textContent = angleTitle(t);
    }, 120);
  }

  private controls(box: HTMLElement): void {
    const button = (label: string, act: () => void) => {
      const b = el('button', 'range', label);
      b.type = 'button';
      b.addEventListener('click', act);
      box.appendChild(b);
    };
    box.appendChild(el('span', 'hint', 'drag across a chart to zoom, double-click for the whole run:'));
    button('whole run', () => this.group.showAll());
    const last = (s: number) => () => {
      const f = this.fullSpan();
      this.group.show(Math.max(f[0], f[1] - s), f[1]);
    };
    button('last day', last(86400));
    button('last hour', last(3600));
    button('last 10 min', last(600));
    const lab = el('label', 'follow');
    const cb = el('input');
    cb.type = 'checkbox';
    cb.checked = this.follow;
    cb.addEventListener('change', () => (this.follow = cb.checked));
    put(lab, cb, ' follow new data');
    box.appendChild(lab);
  }

  private renderHeader(): void {
    const s = this.summary;
    clear(this.header);
    if (!this.opts.tables) return;
    put(this.header, el('h1', undefined, `Run ${s.run} — station ${s.station}, fibre ${s.fibre}`));
    const line = el('p', 'status');
    put(line, el('span', `state state-${s.status}`, s.status), ` · from ${whenText(s.started_at)}`,
      s.ended_at ? ` to ${whenText(s.ended_at)}` : ' · still recording',
      s.duration_s !== null ? ` · ${duration(s.duration_s)}` : '',
      ` · ${s.samples} samples · ${s.windows} windows (${s.windows_ok} ok) · ${s.gaps} gaps · ${s.events} events`);
    this.header.appendChild(line);
    const warnings = s.warnings;
    if (warnings.length) {
      const w = put(this.header, el('div', 'warnings')).lastChild as HTMLElement;
      w.appendChild(el('h2', undefined, 'Warnings'));
      const ul = put(w, el('ul')).lastChild as HTMLElement;
      for (const x of warnings) put(ul, put(el('li'), el('span', 'kind', x.kind), ` ${x.message}`));
    }
    const raised = s.alerts.filter((a) => a.state && a.state !== 'cleared');
    if (raised.length) {
      const a = put(this.header, el('div', 'alerts')).lastChild as HTMLElement;
      a.appendChild(el('h2', undefined, 'Alerts standing'));
      const ul = put(a, el('ul')).lastChild as HTMLElement;
      for (const x of raised) put(ul, put(el('li'), el('span', 'kind', x.kind), ` ${x.state} at ${whenText(x.t)}: ${x.message}`));
    }
  }

  private renderTables(): void {
    const box = this.tablesBox;
    clear(box);
    const s = this.summary;
    const sum = section('Summary (standard uncertainties, 1σ)');
    const perH = (x: number | null | undefined) => (x === null || x === undefined ? null : x * 3600);
    const rows: [string, string][] = [
      ['period', withSigma(s.period_s, s.period_sigma_s, 's')],
      ['Q (from the amplitude decay over the run)', withSigma(s.q, s.q_sigma)],
      ['decay rate γ', withSigma(s.decay_rate_per_s, s.decay_rate_sigma_per_s, '1/s')],
      ['equilibrium rate (creep)', withSigma(perH(s.equilibrium_rate_rad_per_s), perH(s.equilibrium_rate_sigma_rad_per_s), 'rad/h')],
    ];
    if (s.kappa_Nm_per_rad !== undefined) rows.push(['torsion constant κ', `${withSigma(s.kappa_Nm_per_rad, s.kappa_sigma_Nm_per_rad, 'N·m/rad')} ${budgetText(s.kappa_sigma_budget)}`.trim()]);
    if (s.shear_modulus_Pa != null) rows.push(['shear modulus G', `${withSigma(s.shear_modulus_Pa / 1e9, (s.shear_modulus_sigma_Pa ?? 0) / 1e9, 'GPa')} ${budgetText(s.shear_modulus_sigma_budget)}`.trim()]);
    if (s.amplitude_rad !== null) rows.push(['amplitude (last window)', `${fmt(s.amplitude_rad)} rad`]);
    if (s.period_amplitude_slope_s_per_rad !== null) {
      rows.push(['period vs swing amplitude', `${withSigma(s.period_amplitude_slope_s_per_rad, s.period_amplitude_slope_sigma_s_per_rad, 's/rad')} (anelasticity: 0 for an elastic fibre)`]);
    }
    const n = s.noise;
    if (n) {
      if (n.equilibrium_adev_min_rad !== null) rows.push(['equilibrium stability floor', `${fmt(n.equilibrium_adev_min_rad)} rad at τ = ${duration(n.equilibrium_adev_min_tau_s ?? NaN)} (lowest Allan deviation)`]);
      if (n.period_adev_min !== null) rows.push(['period stability floor', `${fmt(n.period_adev_min * 1e6)} ppm at τ = ${duration(n.period_adev_min_tau_s ?? NaN)}`]);
      if (n.thermal_angle_rms_rad !== null) rows.push(['thermal angle rms √(k_B·T/κ)', `${fmt(n.thermal_angle_rms_rad)} rad`]);
      if (n.thermal_torque_asd_at_resonance_Nm_per_rtHz !== null) rows.push(['thermal torque at resonance', `${fmt(n.thermal_torque_asd_at_resonance_Nm_per_rtHz)} N·m/√Hz`]);
    }
    rows.push(['corrections', correctionsText(s)]);
    sum.appendChild(facts(rows));
    box.appendChild(sum);
    const ev = section(`Events (${this.events.length})`);
    const shown = this.events.slice(-2000);
    if (shown.length < this.events.length) ev.appendChild(el('p', 'note', `the latest ${shown.length} of ${this.events.length}; all of them: /api/runs/${s.run}/events`));
    ev.appendChild(table(['time', 't_s (s)', 'kind', 'state', 'level', 'value', 'limit', 'what happened'],
      shown.map((e) => {
        const unit = typeof e.data?.unit === 'string' ? ` ${e.data.unit}` : '';
        const v = (x: number | null) => (x === null ? '—' : `${fmt(x)}${unit}`);
        return [whenText(e.t), e.t_s.toFixed(1), e.kind, e.state ?? '', [e.severity, `sev-${e.severity}`], v(e.value), v(e.threshold), e.message];
      })));
    box.appendChild(ev);
  }
}

function angleTitle(t: TraceAnswer): string {
  if (t.bucket_s === null) return `angle, every sample (${t.samples})`;
  const b = t.bucket_s < 60 ? `${fmt(t.bucket_s, 3)} s` : duration(t.bucket_s).replace(/^00:/, '');
  return `angle, min and max per ${b} (${t.samples} samples)`;
}

function medianStep(t: number[]): number {
  if (t.length < 3) return 0;
  const d: number[] = [];
  for (let i = 1; i < t.length; i += Math.max(1, Math.floor(t.length / 200))) d.push(t[i] - t[i - 1]);
  d.sort((a, b) => a - b);
  return d[d.length >> 1];
}
