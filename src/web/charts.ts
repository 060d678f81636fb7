/// <reference lib="dom" />
/**
 * Charts on uPlot (bundled: no CDN). A chart here is a figure with a title, a
 * uPlot over aligned arrays, and three small drawing additions: σ whiskers on
 * points, vertical marks for alerts and events, and a shaded x band. Time
 * charts of one page share their x axis: zooming one (drag) zooms all, a
 * double click shows the whole span again. Times are drawn in UTC.
 */
import uPlot from 'uplot';
import { fmt } from '../display/format.js';
import { el } from './dom.js';
import { localText, utcText } from './time-text.js';

/** A vertical mark on time charts (an alert or an event). */
export interface Marker {
  /** unix time, s */
  x: number;
  severity: string;
  label: string;
}

/** One y series. */
export interface SeriesSpec {
  label: string;
  color: string;
  /** y scale key (default 'y'); a second key gets the right-hand axis */
  scale?: string;
  /** 'line' (default), 'points', or 'both' */
  style?: 'line' | 'points' | 'both';
  /** unit for the legend value */
  unit?: string;
  width?: number;
  dash?: number[];
  /** point size, CSS px (default 4) */
  pointSize?: number;
}

/** What a chart shows. */
export interface ChartSpec {
  /** name for tests and styles (data-chart) */
  name: string;
  title: string;
  /** 'time' (unix s, UTC), 'log' or 'linear' */
  x: 'time' | 'log' | 'linear';
  xLabel?: string;
  /** labels of the y axes by scale key */
  yLabels: Record<string, string>;
  series: SeriesSpec[];
  /** fill between series (1-based data indexes: [lower, upper]) */
  bands?: [number, number][];
  /** log y scales */
  yLog?: boolean;
  height?: number;
  /** marks to draw (read at every redraw, so they can grow) */
  markers?: () => Marker[];
  /** a shaded x span, e.g. the thermal band of a spectrum */
  shade?: () => [number, number] | null;
  /** y tick text (default: numbers to the tick spacing) */
  yValues?: (v: number) => string;
  /** the y range, read at every redraw (default: fitted to the data and their σ) */
  yRange?: () => [number, number];
  /**
   * 'data': a log x axis over the data's own span, widened a little, with ticks at
   * 1…9 × 10ⁿ labelled where there is room (for a span within a decade or two,
   * where whole decades would leave the axis blank); default: whole steps of the axis
   */
  xSpan?: 'data';
}

/** Data of a chart: x then one array per series, and optional σ arrays per series (same index as the series). */
export interface ChartData {
  x: ArrayLike<number>;
  y: (ArrayLike<number | null>)[];
  sigma?: (ArrayLike<number | null> | null)[];
}

const SEVERITY_COLOUR: Record<string, string> = { info: '#7d7d7d', warning: '#b87800', alarm: '#b3261e' };

/** A time value for the legend: UTC, local beside. */
const timeValue = (v: number | null) => (v === null || v === undefined ? '—' : `${utcText(v * 1000)} · ${localText(v * 1000)}`);

/** One chart in its figure. */
export class Chart {
  readonly u: uPlot;
  readonly figure: HTMLElement;
  private sigma: (ArrayLike<number | null> | null)[] = [];

  constructor(parent: HTMLElement, readonly spec: ChartSpec, data: ChartData, group?: ChartGroup) {
    this.figure = el('figure', 'chart');
    this.figure.dataset.chart = spec.name;
    parent.appendChild(this.figure);
    const scales: uPlot.Scales = { x: spec.x === 'time' ? { time: true } : { time: false, distr: spec.x === 'log' ? 3 : 1 } };
    const yKeys = [...new Set(spec.series.map((s) => s.scale ?? 'y'))];
    for (const k of yKeys) scales[k] = { distr: spec.yLog ? 3 : 1 };
    for (const k of yKeys) scales[k].range = spec.yRange ? () => spec.yRange!() : (u, min, max) => this.yRange(u, k, min, max);
    const yValues = spec.yValues ? (_u: uPlot, ticks: number[]) => ticks.map((t) => spec.yValues!(t)) : spec.yLog ? decadeTicks : numberTicks;
    const dataSpan = spec.x === 'log' && spec.xSpan === 'data';
    if (dataSpan) scales.x.range = (u, min, max) => logDataRange(u, min, max);
    const axes: uPlot.Axis[] = [
      spec.x === 'time'
        ? { label: spec.xLabel ?? 'UTC', values: timeTicks, space: 80, size: 44 }
        : dataSpan
          ? { label: spec.xLabel, splits: logSplits, filter: logFilter, values: spacedLogTicks, space: 48 }
          : { label: spec.xLabel, values: spec.x === 'log' ? decadeTicks : numberTicks, space: 60 },
      ...yKeys.map((k, i): uPlot.Axis => ({ scale: k, label: spec.yLabels[k] ?? '', side: i === 0 ? 3 : 1, values: yValues, size: 70, grid: { show: i === 0 } })),
    ];
    // time charts of a page share their x axis: the same room on the right for all, used or not, keeps their times aligned
    if (spec.x === 'time' && yKeys.length === 1) axes.push({ scale: yKeys[0], side: 1, label: ' ', values: () => [], size: 70, grid: { show: false }, ticks: { show: false } });
    const series: uPlot.Series[] = [
      spec.x === 'time' ? { label: 'UTC', value: (_u, v) => timeValue(v) } : { label: spec.xLabel ?? 'x', value: (_u, v) => fmt(v) },
      ...spec.series.map((s): uPlot.Series => ({
        label: s.label,
        scale: s.scale ?? 'y',
        stroke: s.color,
        width: s.width ?? (s.style === 'points' ? 0 : 1.25),
        dash: s.dash,
        paths: s.style === 'points' ? () => null : undefined,
        points: s.style === 'points' || s.style === 'both' ? { show: true, size: s.pointSize ?? 4, stroke: s.color, fill: s.color } : { show: false },
        spanGaps: false,
        value: (_u, v) => (v === null || v === undefined ? '—' : `${fmt(v)}${s.unit ? ` ${s.unit}` : ''}`),
      })),
    ];
    const opts: uPlot.Options = {
      title: spec.title,
      width: widthOf(parent),
      height: spec.height ?? 220,
      tzDate: spec.x === 'time' ? (ts) => uPlot.tzDate(new Date(ts * 1e3), 'Etc/UTC') : undefined,
      scales,
      axes,
      series,
      bands: spec.bands?.map(([lo, hi]) => ({ series: [hi, lo] as [number, number], fill: fade(spec.series[hi - 1]?.color ?? '#888') })),
      cursor: {
        drag: { x: true, y: false, setScale: true },
        sync: group ? { key: group.key, setSeries: false } : undefined,
        bind: group ? { dblclick: () => () => { group.showAll(); return null; } } : undefined,
      },
      legend: { live: true },
      hooks: {
        draw: [(u) => this.drawExtras(u)],
        setScale: [(u, key) => {
          if (key === 'x' && group) group.moved(this, u.scales.x.min!, u.scales.x.max!);
        }],
      },
    };
    this.sigma = data.sigma ?? [];
    this.u = new uPlot(opts, toAligned(data), this.figure);
    this.count(data);
    group?.add(this);
  }

  /** Replace the data; keeps the x range unless `reset`. */
  setData(data: ChartData, reset = false): void {
    this.sigma = data.sigma ?? [];
    const x = this.u.scales.x;
    const keep = !reset && x.min !== undefined && x.max !== undefined ? [x.min!, x.max!] : null;
    this.quiet = true;
    try {
      // one batch: new data, y refitted, x put back, hooks run now (while quiet)
      this.u.batch(() => {
        this.u.setData(toAligned(data), true);
        if (keep) this.u.setScale('x', { min: keep[0], max: keep[1] });
      });
    } finally {
      this.quiet = false;
    }
    this.count(data);
  }

  /** Show x in [min, max] (without telling the group: it is the group that asks). */
  setX(min: number, max: number): void {
    this.quiet = true;
    try {
      // batch: commit now, so the setScale hook runs while `quiet` is set
      this.u.batch(() => this.u.setScale('x', { min, max }));
    } finally {
      this.quiet = false;
    }
  }

  /** True while the group moves this chart (so it does not echo). */
  quiet = false;

  /** Fit the chart to its container's width. */
  resize(): void {
    this.u.setSize({ width: widthOf(this.figure.parentElement as HTMLElement), height: this.spec.height ?? 220 });
  }

  /** A y range that includes the σ whiskers of the series on that scale (uPlot fits the values only). */
  private yRange(u: uPlot, key: string, min: number | null, max: number | null): uPlot.Range.MinMax {
    let lo = min ?? Infinity, hi = max ?? -Infinity;
    const xs = u.data[0];
    const x0 = u.scales.x?.min ?? -Infinity, x1 = u.scales.x?.max ?? Infinity;
    this.sigma.forEach((sig, si) => {
      if (!sig || (this.spec.series[si].scale ?? 'y') !== key) return;
      const ys = u.data[si + 1];
      for (let i = 0; i < ys.length; i++) {
        const y = ys[i], e = sig[i];
        if (y === null || y === undefined || e === null || e === undefined || !(e > 0) || xs[i] < x0 || xs[i] > x1) continue;
        lo = Math.min(lo, y - e);
        hi = Math.max(hi, y + e);
      }
    });
    if (!Number.isFinite(lo) || !Number.isFinite(hi)) return [0, 1];
    if (this.spec.yLog) return uPlot.rangeLog(Math.max(lo, Number.MIN_VALUE), hi, 10, true);
    return uPlot.rangeNum(lo, hi, 0.1, true);
  }

  /** Points drawn, for tests and for people (data-points on the figure). */
  private count(d: ChartData): void {
    let n = 0;
    for (const ys of d.y) for (let i = 0; i < ys.length; i++) if (ys[i] !== null && Number.isFinite(ys[i] as number)) n++;
    this.figure.dataset.points = String(n);
  }

  private drawExtras(u: uPlot): void {
    const ctx = u.ctx;
    const { left, top, width, height } = u.bbox;
    ctx.save();
    ctx.beginPath();
    ctx.rect(left, top, width, height);
    ctx.clip();
    const shade = this.spec.shade?.();
    if (shade) {
      const a = u.valToPos(shade[0], 'x', true), b = u.valToPos(shade[1], 'x', true);
      ctx.fillStyle = 'rgba(43, 76, 111, 0.08)';
      ctx.fillRect(Math.min(a, b), top, Math.abs(b - a), height);
    }
    // σ whiskers: a vertical line from y − σ to y + σ at each point in view
    const xs = u.data[0];
    const [x0, x1] = [u.scales.x.min ?? -Infinity, u.scales.x.max ?? Infinity];
    this.sigma.forEach((sig, si) => {
      if (!sig) return;
      const s = this.spec.series[si];
      const ys = u.data[si + 1];
      ctx.strokeStyle = s.color;
      ctx.lineWidth = 1;
      ctx.beginPath();
      for (let i = 0; i < xs.length; i++) {
        const y = ys[i], e = sig[i];
        if (y === null || y === undefined || e === null || e === undefined || !(e > 0) || xs[i] < x0 || xs[i] > x1) continue;
        const px = Math.round(u.valToPos(xs[i], 'x', true)) + 0.5;
        ctx.moveTo(px, u.valToPos(y - e, s.scale ?? 'y', true));
        ctx.lineTo(px, u.valToPos(y + e, s.scale ?? 'y', true));
      }
      ctx.stroke();
    });
    // alerts and events: a vertical mark each, coloured by severity
    for (const m of this.spec.markers?.() ?? []) {
      if (m.x < x0 || m.x > x1) continue;
      const px = Math.round(u.valToPos(m.x, 'x', true)) + 0.5;
      ctx.strokeStyle = SEVERITY_COLOUR[m.severity] ?? SEVERITY_COLOUR.info;
      ctx.globalAlpha = 0.7;
      ctx.lineWidth = m.severity === 'alarm' ? 2 : 1;
      ctx.setLineDash(m.severity === 'info' ? [3, 3] : []);
      ctx.beginPath();
      ctx.moveTo(px, top);
      ctx.lineTo(px, top + height);
      ctx.stroke();
    }
    ctx.restore();
  }
}

/** Time charts that move together, and what to do when the visible span changes. */
export class ChartGroup {
  readonly charts: Chart[] = [];
  readonly key = `fw-${Math.random().toString(36).slice(2)}`;
  private full: [number, number] | null = null;

  /** @param onRange called after the visible span changed (zoom, whole span, follow) */
  constructor(private readonly onRange: (min: number, max: number) => void = () => {}) {
    window.addEventListener('resize', () => {
      clearTimeout(this.resizeTimer);
      this.resizeTimer = setTimeout(() => this.charts.forEach((c) => c.resize()), 150);
    });
  }
  private resizeTimer: ReturnType<typeof setTimeout> | undefined;

  add(c: Chart): void {
    this.charts.push(c);
    if (this.full) c.setX(this.full[0], this.full[1]);
  }

  /** The whole span (what a double click shows). */
  setFull(min: number, max: number): void {
    this.full = [min, max];
  }

  /** The visible span now. */
  visible(): [number, number] | null {
    const x = this.charts[0]?.u.scales.x;
    return x && x.min !== undefined && x.max !== undefined ? [x.min!, x.max!] : this.full;
  }

  /** Show [min, max] on every chart. */
  show(min: number, max: number): void {
    for (const c of this.charts) c.setX(min, max);
    this.onRange(min, max);
  }

  /** Show the whole span. */
  showAll(): void {
    if (this.full) this.show(this.full[0], this.full[1]);
  }

  /** A chart's x moved by the user: move the others. */
  moved(from: Chart, min: number, max: number): void {
    if (from.quiet) return;
    for (const c of this.charts) if (c !== from) c.setX(min, max);
    this.onRange(min, max);
  }
}

/** Time ticks in UTC: dates for steps of days, HH:MM (and the date where it changes) for hours and minutes, seconds below. */
function timeTicks(_u: uPlot, splits: number[], _axis: number, _space: number, incr: number): string[] {
  let last = '';
  return splits.map((t) => {
    const iso = new Date(t * 1000).toISOString();
    const date = iso.slice(0, 10);
    let text = incr >= 86400 ? date.slice(5) : incr >= 60 ? iso.slice(11, 16) : incr >= 1 ? iso.slice(11, 19) : iso.slice(11, 23);
    if (incr >= 86400) {
      if (date.slice(0, 4) !== last.slice(0, 4)) text = date;
    } else if (date !== last) text += `\n${date}`;
    last = date;
    return text;
  });
}

/** Number ticks with as many decimals as the tick spacing needs (`21.85`, not `21.9`); powers of ten outside 1e-3 … 1e6. */
function numberTicks(_u: uPlot, splits: number[], _axis: number, _space: number, incr: number): string[] {
  const big = Math.max(...splits.map(Math.abs));
  if (big === 0 || (big >= 1e-3 && big < 1e6 && incr >= 1e-6)) {
    const d = Math.max(0, Math.ceil(-Math.log10(incr) - 1e-9));
    return splits.map((t) => t.toFixed(Math.min(d, 12)));
  }
  const e = Math.floor(Math.log10(big));
  const digits = Math.max(0, Math.min(12, e - Math.floor(Math.log10(incr) + 1e-9)));
  return splits.map((t) => (t === 0 ? '0' : t.toExponential(digits)));
}

/** Log-axis ticks: a label at each power of ten, none between. */
function decadeTicks(_u: uPlot, splits: number[]): string[] {
  return splits.map((t) => {
    const l = Math.log10(t);
    return Math.abs(l - Math.round(l)) < 1e-6 ? fmt(t, 2) : '';
  });
}

const isDecade = (t: number | null): boolean => t !== null && t > 0 && Math.abs(Math.log10(t) - Math.round(Math.log10(t))) < 1e-6;

/** A log x range: the data's own span widened by 4 % each side when it is the whole of it (a zoom is kept as asked). */
function logDataRange(u: uPlot, min: number | null, max: number | null): uPlot.Range.MinMax {
  if (min === null || max === null || !(min > 0) || !(max > 0)) return [1, 10];
  if (min === max) return [min / 1.2, max * 1.2];
  const xs = u.data[0];
  const whole = xs.length > 0 && min === xs[0] && max === xs[xs.length - 1];
  return whole ? [min / 1.04, max * 1.04] : [min, max];
}

/** Ticks at 1…9 × 10ⁿ within [min, max]. */
function logSplits(_u: uPlot, _axis: number, min: number, max: number): number[] {
  const out: number[] = [];
  if (!(min > 0) || !(max > min)) return out;
  for (let e = Math.floor(Math.log10(min)); e <= Math.ceil(Math.log10(max)); e++) {
    for (let m = 1; m <= 9; m++) {
      const v = Number((m * 10 ** e).toPrecision(6));
      if (v >= min && v <= max) out.push(v);
    }
  }
  return out;
}

/** Two or more decades in view: ticks at the decades only; fewer: every one. */
function logFilter(_u: uPlot, splits: number[]): (number | null)[] {
  return splits.filter(isDecade).length >= 2 ? splits.map((t) => (isDecade(t) ? t : null)) : splits;
}

/** Labels of the ticks kept, left to right, each at least the axis's space from the one before. */
function spacedLogTicks(u: uPlot, splits: (number | null)[], axisIdx: number): string[] {
  const key = u.axes[axisIdx].scale ?? 'x';
  let last = -Infinity;
  return splits.map((t) => {
    if (t === null || !(t > 0)) return '';
    const px = u.valToPos(t, key);
    if (px - last < 48) return '';
    last = px;
    return fmt(t, 2);
  });
}

function toAligned(d: ChartData): uPlot.AlignedData {
  return [Array.from(d.x), ...d.y.map((ys) => Array.from(ys, (v) => (v === null || !Number.isFinite(v as number) ? null : v)))] as uPlot.AlignedData;
}

function widthOf(e: HTMLElement | null): number {
  const w = e?.clientWidth ?? 0;
  return Math.max(320, (w || 900) - 4);
}

/** A colour made faint for a band fill. */
function fade(hex: string): string {
  const m = /^#([0-9a-f]{2})([0-9a-f]{2})([0-9a-f]{2})$/i.exec(hex);
  if (!m) return 'rgba(128,128,128,0.2)';
  return `rgba(${parseInt(m[1], 16)}, ${parseInt(m[2], 16)}, ${parseInt(m[3], 16)}, 0.35)`;
}
