/// <reference lib="dom" />
/**
 * The "Swing amplitude" section of a run (dashboard run page and report): the
 * period's offset in ppm from the fitted line's reference period against the
 * swing amplitude — each window, the amplitude bins with ±σ, the fitted line —
 * and Q per window and per bin, on a log amplitude axis in mrad; above them one
 * line with the slope ± σ and whether the temperature term was taken out.
 * Drawn again, refitted to the data, when new data arrive.
 */
import type { AmplitudeDependence } from '../summaries/amplitude-dependence.js';
import { fmt, withSigma } from '../display/format.js';
import { Chart, type ChartData } from './charts.js';
import { clear, el, put } from './dom.js';
import { amplitudeSeries, type AmplitudeSeries } from './amplitude-series.js';

const COLOURS = { windows: '#6a4c93', bins: '#b5651d', line: '#2b4c6f', q: '#3b7a57' };

/** The section's content, in `box` (the heading is the caller's). */
export class AmplitudeView {
  private readonly text: HTMLElement;
  private readonly chartBox: HTMLElement;
  private period: Chart | undefined;
  private q: Chart | undefined;
  private series: AmplitudeSeries | undefined;

  constructor(box: HTMLElement) {
    this.text = put(box, el('p', 'amplitude-fit')).lastChild as HTMLElement;
    this.chartBox = put(box, el('div', 'charts')).lastChild as HTMLElement;
  }

  /**
   * Show `a` (null: nothing to show, with `missing` said instead); `windowsUsed`, when
   * more than the points given, says they are every k-th of that many (the report's).
   */
  update(a: AmplitudeDependence | null, opts: { missing?: string; windowsUsed?: number } = {}): void {
    const s = a ? amplitudeSeries(a) : undefined;
    if (!a || !s || !s.windows) {
      this.text.textContent = opts.missing ?? 'no window with a fitted amplitude and period yet';
      this.text.className = 'note amplitude-fit';
      return;
    }
    this.series = s;
    this.text.className = 'amplitude-fit';
    this.text.textContent = fitText(a, s, opts.windowsUsed);
    const title = `period − ${s.ref_s === null ? '—' : `${fmt(s.ref_s, 9)} s`} (${a.line ? 'the fitted line at the reference amplitude' : 'median: no slope fitted'}), ppm`;
    if (!this.period || !this.q) {
      clear(this.chartBox);
      this.period = new Chart(this.chartBox, {
        name: 'swing-period', title, x: 'log', xSpan: 'data', xLabel: 'swing amplitude (mrad)', yLabels: { y: 'ppm' },
        yRange: () => this.series?.periodRange ?? [0, 1],
        series: [
          { label: 'window', color: COLOURS.windows, style: 'points', unit: 'ppm', pointSize: 4 },
          { label: 'bin mean ±σ', color: COLOURS.bins, style: 'points', unit: 'ppm', pointSize: 7 },
          { label: 'fitted line', color: COLOURS.line, unit: 'ppm', width: 1, dash: [6, 4] },
        ],
      }, this.periodData(s));
      this.q = new Chart(this.chartBox, {
        name: 'swing-q', title: 'Q per window and per amplitude bin (from the bin\'s mean decay rate)', x: 'log', xSpan: 'data', xLabel: 'swing amplitude (mrad)', yLabels: { y: 'Q' },
        yRange: () => this.series?.qRange ?? [0, 1],
        series: [
          { label: 'window', color: COLOURS.q, style: 'points', pointSize: 4 },
          { label: 'bin ±σ', color: COLOURS.bins, style: 'points', pointSize: 7 },
        ],
      }, this.qData(s));
    } else {
      const t = this.period.figure.querySelector('.u-title');
      if (t) t.textContent = title;
      // refitted to the data: new windows may reach smaller amplitudes
      this.period.setData(this.periodData(s), true);
      this.q.setData(this.qData(s), true);
    }
  }

  private periodData(s: AmplitudeSeries): ChartData {
    return { x: s.x, y: [s.period.windows, s.period.bins, s.period.line], sigma: [null, s.period.binSigma, null] };
  }

  private qData(s: AmplitudeSeries): ChartData {
    return { x: s.x, y: [s.q.windows, s.q.bins], sigma: [null, s.q.binSigma] };
  }
}

/** The slope line: s/rad ± σ, as ppm per mrad of the reference period, the temperature term, what was used. */
function fitText(a: AmplitudeDependence, s: AmplitudeSeries, windowsUsed: number | undefined): string {
  const slope = a.period_amplitude_slope_s_per_rad, sigma = a.period_amplitude_slope_sigma_s_per_rad;
  const parts: string[] = [];
  if (slope === null) parts.push('period–amplitude slope: none fitted (too few windows, or too narrow a span of amplitudes)');
  else {
    // s/rad over the reference period: fraction per rad; ×1e6 ppm, ×1e-3 per mrad
    const k = s.ref_s ? 1e3 / s.ref_s : null;
    const rel = k === null ? '' : ` (${withSigma(slope * k, sigma === null ? null : sigma * k, 'ppm/mrad')})`;
    parts.push(`period–amplitude slope ${withSigma(slope, sigma, 's/rad')}${rel}; 0 for an elastic fibre`);
  }
  parts.push(a.temperature_removed ? 'temperature term removed' : 'temperature term not removed (it needs temp_C in every window, spanning at least 0.05 K)');
  const shown = s.windows;
  const used = windowsUsed !== undefined && windowsUsed > shown ? `${shown} of the ${windowsUsed} windows used drawn (one in ${Math.ceil(windowsUsed / shown)})` : `${shown} windows`;
  parts.push(`${used}, ${a.bins.amplitude_rad.length} amplitude bins; periods with the configurations' offsets${a.temperature_removed ? ' and the temperature term' : ''} taken out`);
  return parts.join(' · ');
}
